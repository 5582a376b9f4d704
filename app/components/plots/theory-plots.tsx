import type { ViewGeometry } from "~/lib/analysis/frames";
import { CartesianGrid, Line, LineChart, ResponsiveContainer, Scatter, ScatterChart, Tooltip, XAxis, YAxis, ZAxis } from "recharts";
import type { TheoryCheckResult } from "~/lib/analysis/check";
import { imageToTable } from "~/lib/analysis/frames";
import { formatNumber } from "~/lib/number-format";
import { niceScale, niceTicks } from "~/lib/nice-ticks";
import { PlotLegend, type LegendEntry } from "./plot-legend";

/** Plot colours: the app's teal for data, amber for fits, ink for theory; each series also has a legend word. */
const colours = { data: "#0c6a72", second: "#8f2318", fit: "#c27c00", theory: "#13202b" };

function thin<T>(points: T[], max = 500): T[] {
  if (points.length <= max) return points;
  const step = points.length / max;
  return Array.from({ length: max }, (_, i) => points[Math.floor(i * step)]!); // i < max, so the index is below points.length
}

/** Equal-aspect domains so a circle looks like a circle. */
function squareDomain(xs: number[], ys: number[]) {
  const finite = (a: number[]) => a.filter(Number.isFinite);
  const fx = finite(xs);
  const fy = finite(ys);
  if (!fx.length || !fy.length) return { x: [-1, 1] as [number, number], y: [-1, 1] as [number, number] };
  const [x0, x1] = [Math.min(...fx), Math.max(...fx)];
  const [y0, y1] = [Math.min(...fy), Math.max(...fy)];
  const half = (Math.max(x1 - x0, y1 - y0) / 2) * 1.1 || 1;
  const mx = (x0 + x1) / 2;
  const my = (y0 + y1) / 2;
  return { x: [mx - half, mx + half] as [number, number], y: [my - half, my + half] as [number, number] };
}

const tick = (v: number) => formatNumber(v, 3);
// The key's f and 2Ω get four figures: at three, a fit 0.25 % off 2Ω (2.089 against 2.094) read the same.
const keyValue = (v: number | null) => (v === null ? "—" : formatNumber(v, 4));

function PlotFrame({
  title,
  caption,
  legend,
  children,
  square,
}: {
  title: string;
  caption: string;
  legend: LegendEntry[];
  children: React.ReactElement;
  square?: boolean;
}) {
  return (
    <figure className="rounded-card border border-line bg-sheet p-3 print:break-inside-avoid">
      <figcaption className="mb-1 font-bold">{title}</figcaption>
      <PlotLegend entries={legend} />
      <div className={square ? "mx-auto aspect-square w-full max-w-[460px]" : "h-72 w-full"}>
        <ResponsiveContainer width="100%" height="100%" initialDimension={{ width: 460, height: square ? 460 : 288 }}>
          {children}
        </ResponsiveContainer>
      </div>
      <p className="mt-1 text-sm text-muted">{caption}</p>
    </figure>
  );
}

/**
 * A y axis label that stays whole: written along the axis, centred on the plot area and drawn
 * inside the chart's left margin, so a long label ("acceleration (cm/s²)") is neither wrapped into
 * the ticks nor cut at the chart's edge.
 */
const yLabel = (value: string) => ({ value, angle: -90, position: "insideLeft" as const, offset: 0, style: { textAnchor: "middle" as const } });

export interface PlotContext {
  result: TheoryCheckResult;
  setup: ViewGeometry;
}

/** The x and y axes of a plan view (seen from above, equal scales), as an array so the chart sees them as its own children. */
function planeAxes(domain: { x: [number, number]; y: [number, number] }, unit: string) {
  return [
    <XAxis
      key="x"
      type="number"
      dataKey="x"
      domain={domain.x}
      interval={0}
      ticks={niceTicks(domain.x)}
      tickFormatter={tick}
      allowDataOverflow
      label={{ value: `x (${unit})`, position: "insideBottom", offset: -16 }}
    />,
    <YAxis
      key="y"
      type="number"
      dataKey="y"
      domain={domain.y}
      interval={0}
      ticks={niceTicks(domain.y)}
      tickFormatter={tick}
      allowDataOverflow
      label={yLabel(`y (${unit})`)}
    />,
  ];
}

export function TheoryPlots({ result, setup }: PlotContext) {
  const unit = result.lengthUnit === "m" ? "cm" : "px";
  const k = result.lengthUnit === "m" ? 100 : 1;
  const rot = thin(result.series.rotating).map((p) => ({ x: p.x * k, y: p.y * k, t: p.t }));
  const lab = thin(result.series.lab).map((p) => ({ x: p.x * k, y: p.y * k, t: p.t }));
  let circle: { x: number; y: number }[] = [];
  if (result.circle) {
    const c = imageToTable({ x: result.circle.cx, y: result.circle.cy }, setup);
    const r = (result.lengthUnit === "m" && result.circle.radiusM !== null ? result.circle.radiusM : result.circle.radiusPx) * k;
    circle = Array.from({ length: 121 }, (_, i) => {
      const a = (i / 120) * 2 * Math.PI;
      return { x: c.x * k + r * Math.cos(a), y: c.y * k + r * Math.sin(a) };
    });
  }
  const rotDomain = squareDomain([...rot.map((p) => p.x), ...circle.map((p) => p.x)], [...rot.map((p) => p.y), ...circle.map((p) => p.y)]);
  const labDomain = squareDomain(
    lab.map((p) => p.x),
    lab.map((p) => p.y),
  );

  const accel = thin(result.series.accelFit, 400);
  const accelPoints = [...accel.map((p) => ({ x: p.v * k, y: p.coriolisX * k, c: "x" })), ...accel.map((p) => ({ x: -p.u * k, y: p.coriolisY * k, c: "y" }))];
  const xs = accelPoints.map((p) => p.x).filter(Number.isFinite);
  const xr = xs.length ? [Math.min(...xs), Math.max(...xs)] : [0, 1];
  const line = (f: number | null) => (f === null ? [] : xr.map((x) => ({ x, y: f * x })));
  const angle = thin(result.series.angle);
  const residuals = thin(result.series.residuals).map((p) => ({ t: p.t, rx: p.rx * k, ry: p.ry * k }));
  const accelUnit = `${unit}/s²`;
  const accelX = niceScale(xr);
  const accelY = niceScale([...accelPoints.map((p) => p.y), ...line(result.fMeasured).map((p) => p.y), ...line(result.fPredicted).map((p) => p.y)], 5);
  const angleTime = niceScale(angle.map((p) => p.t));
  const angleY = niceScale(
    angle.flatMap((p) => [p.angle, p.fitted]),
    5,
  );
  const residualTime = niceScale(residuals.map((p) => p.t));
  const residualY = niceScale(
    residuals.flatMap((p) => [p.rx, p.ry]),
    5,
  );
  const rotLegend: LegendEntry[] = [{ label: "tracer", colour: colours.data, mark: "dot" }];
  if (circle.length) rotLegend.push({ label: "fitted circle", colour: colours.fit, mark: "line" });

  return (
    <div className="grid gap-4 lg:grid-cols-2" data-testid="theory-plots">
      <PlotFrame
        square
        title="Track in the rotating frame"
        caption={`Seen from above, x right and y up, ${unit}. The amber circle is the fitted inertial circle.`}
        legend={rotLegend}
      >
        <ScatterChart margin={{ top: 10, right: 16, bottom: 28, left: 16 }}>
          <CartesianGrid stroke="#dde2e6" />
          {planeAxes(rotDomain, unit)}
          <ZAxis range={[12, 12]} />
          <Tooltip formatter={(v: unknown) => tick(Number(v))} />
          <Scatter name="tracer" data={rot} fill={colours.data} isAnimationActive={false} />
          {circle.length ? (
            <Scatter
              name="fitted circle"
              data={circle}
              line={{ stroke: colours.fit, strokeWidth: 2 }}
              shape={() => <g />}
              fill={colours.fit}
              isAnimationActive={false}
            />
          ) : null}
        </ScatterChart>
      </PlotFrame>
      <PlotFrame
        square
        title="Track in the lab frame"
        caption={`As a camera standing in the room would see it, ${unit}.`}
        legend={[{ label: "tracer (lab frame)", colour: colours.second, mark: "dot" }]}
      >
        <ScatterChart margin={{ top: 10, right: 16, bottom: 28, left: 16 }}>
          <CartesianGrid stroke="#dde2e6" />
          {planeAxes(labDomain, unit)}
          <ZAxis range={[12, 12]} />
          <Scatter name="tracer (lab frame)" data={lab} fill={colours.second} isAnimationActive={false} />
        </ScatterChart>
      </PlotFrame>
      <PlotFrame
        title="Coriolis acceleration against the rotated velocity"
        caption={`Points: (v, aₓ + r u) and (−u, a_y + r v). Their slope is f; amber is the fit, ink is 2Ω from the rate in force.`}
        legend={[
          { label: "measured", colour: colours.data, mark: "dot" },
          { label: `fit, f = ${keyValue(result.fMeasured)} 1/s`, colour: colours.fit, mark: "line" },
          { label: `2Ω = ${keyValue(result.fPredicted)} 1/s`, colour: colours.theory, mark: "dashed" },
        ]}
      >
        <ScatterChart margin={{ top: 10, right: 16, bottom: 28, left: 16 }}>
          <CartesianGrid stroke="#dde2e6" />
          <XAxis
            type="number"
            dataKey="x"
            domain={accelX.domain}
            interval={0}
            ticks={accelX.ticks}
            tickFormatter={tick}
            label={{ value: `rotated velocity (${unit}/s)`, position: "insideBottom", offset: -16 }}
          />
          <YAxis
            type="number"
            dataKey="y"
            domain={accelY.domain}
            interval={0}
            ticks={accelY.ticks}
            tickFormatter={tick}
            label={yLabel(`acceleration (${accelUnit})`)}
          />
          <ZAxis range={[10, 10]} />
          <Scatter name="measured" data={accelPoints} fill={colours.data} isAnimationActive={false} />
          <Scatter
            name="fit"
            data={line(result.fMeasured)}
            line={{ stroke: colours.fit, strokeWidth: 3 }}
            shape={() => <g />}
            fill={colours.fit}
            isAnimationActive={false}
          />
          <Scatter
            name="2Ω"
            data={line(result.fPredicted)}
            line={{ stroke: colours.theory, strokeWidth: 2, strokeDasharray: "6 4" }}
            shape={() => <g />}
            fill={colours.theory}
            isAnimationActive={false}
          />
        </ScatterChart>
      </PlotFrame>
      <PlotFrame
        title="Direction of motion against time"
        caption="The velocity's angle, unwrapped, in radians. A straight line of slope −f means steady inertial turning."
        legend={[
          { label: "measured", colour: colours.data, mark: "line" },
          { label: "straight fit", colour: colours.fit, mark: "dashed" },
        ]}
      >
        <LineChart data={angle} margin={{ top: 10, right: 16, bottom: 28, left: 16 }}>
          <CartesianGrid stroke="#dde2e6" />
          <XAxis
            type="number"
            dataKey="t"
            tickFormatter={tick}
            domain={angleTime.domain}
            interval={0}
            ticks={angleTime.ticks}
            label={{ value: "time (s)", position: "insideBottom", offset: -16 }}
          />
          <YAxis domain={angleY.domain} interval={0} ticks={angleY.ticks} tickFormatter={tick} label={yLabel("angle (rad)")} />
          <Line name="measured" dataKey="angle" stroke={colours.data} dot={false} strokeWidth={2} isAnimationActive={false} />
          <Line name="straight fit" dataKey="fitted" stroke={colours.fit} dot={false} strokeDasharray="6 4" strokeWidth={2} isAnimationActive={false} />
        </LineChart>
      </PlotFrame>
      <PlotFrame
        title="Residuals of the acceleration fit"
        caption={`Measured minus fitted acceleration, ${accelUnit}. Structure here means the model misses something.`}
        legend={[
          { label: "x", colour: colours.data, mark: "line" },
          { label: "y", colour: colours.second, mark: "line" },
        ]}
      >
        <LineChart data={residuals} margin={{ top: 10, right: 16, bottom: 28, left: 16 }}>
          <CartesianGrid stroke="#dde2e6" />
          <XAxis
            type="number"
            dataKey="t"
            tickFormatter={tick}
            domain={residualTime.domain}
            interval={0}
            ticks={residualTime.ticks}
            label={{ value: "time (s)", position: "insideBottom", offset: -16 }}
          />
          <YAxis domain={residualY.domain} interval={0} ticks={residualY.ticks} tickFormatter={tick} label={yLabel(`residual (${accelUnit})`)} />
          <Line name="x" dataKey="rx" stroke={colours.data} dot={false} isAnimationActive={false} />
          <Line name="y" dataKey="ry" stroke={colours.second} dot={false} isAnimationActive={false} />
        </LineChart>
      </PlotFrame>
    </div>
  );
}
