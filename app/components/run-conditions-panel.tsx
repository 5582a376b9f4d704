import {
  cautions,
  ekmanDepth,
  ekmanNumber,
  freeSurface,
  inertialPeriod,
  readyAt,
  rossbyNumber,
  spinUpTime,
  waterKinematicViscosity,
  WATER_TEMPERATURE_RANGE,
} from "~/lib/conditions/run-conditions";
import { omegaFromTableRate } from "~/lib/analysis/run-omega";
import { formatNumber } from "~/lib/number-format";
import { useLabTime } from "~/components/lab-time";
import { formatDuration } from "~/lib/time-format";
import { Card } from "./ui/card";
import { Notice } from "./ui/notice";

export interface RunConditionsProps {
  rpm: number;
  direction: "ccw" | "cw";
  depthCm: number;
  temperatureC: number;
  tankRadiusM: number | null;
  tankDepthM: number | null;
  tableMaxRpm: number | null;
  rateReachedAt: Date | null;
  spinUpTimesToWait: number;
  /** An observed speed (m/s) and length (m), when a track gives them, for the Rossby number. */
  observed?: { speed: number; length: number } | null;
}

function Row({ label, value, unit, note }: { label: string; value: string; unit?: string; note?: string }) {
  return (
    <div className="flex items-baseline justify-between gap-3 border-b border-line py-2">
      <dt>
        {label}
        {note ? <span className="block text-sm text-muted">{note}</span> : null}
      </dt>
      <dd className="text-right font-mono text-lg font-bold">
        {value}
        {unit && value !== "—" ? <span className="ml-1 font-sans text-base font-normal text-muted">{unit}</span> : null}
      </dd>
    </div>
  );
}

/** The run's conditions worked out live from the same library code the server uses. */
export function RunConditionsPanel(p: RunConditionsProps) {
  const time = useLabTime();
  const omega = omegaFromTableRate(p.rpm, p.direction);
  const depth = p.depthCm / 100;
  const tempOk = Number.isFinite(p.temperatureC) && p.temperatureC >= WATER_TEMPERATURE_RANGE.min && p.temperatureC <= WATER_TEMPERATURE_RANGE.max;
  const nu = tempOk ? waterKinematicViscosity(p.temperatureC) : Number.NaN;
  const absOmega = Math.abs(omega);
  const tau = Number.isFinite(nu) && depth > 0 && absOmega > 0 ? spinUpTime(depth, nu, absOmega) : Number.NaN;
  const ready = p.rateReachedAt && Number.isFinite(tau) ? readyAt(p.rateReachedAt, tau, p.spinUpTimesToWait) : null;
  const surface = p.tankRadiusM && depth > 0 && Number.isFinite(omega) ? freeSurface(omega, p.tankRadiusM, depth) : null;
  const warn = Number.isFinite(omega)
    ? cautions({ omega, maxRateRpm: p.tableMaxRpm, tankRadius: p.tankRadiusM, restDepth: depth > 0 ? depth : null, wallHeight: p.tankDepthM })
    : [];
  const ro = p.observed && Number.isFinite(omega) ? rossbyNumber(p.observed.speed, 2 * omega, p.observed.length) : Number.NaN;

  return (
    <Card title="Run conditions" className="self-start">
      <dl data-testid="run-conditions">
        <Row label="Ω" value={formatNumber(omega, 4)} unit="rad/s" note={p.direction === "cw" ? "clockwise: negative" : "counterclockwise: positive"} />
        <Row label="f = 2Ω" value={formatNumber(2 * omega, 4)} unit="1/s" />
        <Row label="Inertial period π/|Ω|" value={formatDuration(inertialPeriod(omega))} />
        <Row label="ν of water" value={Number.isFinite(nu) ? formatNumber(nu * 1e6, 4) : "—"} unit="mm²/s" note="Korson, Drost-Hansen & Millero 1969" />
        <Row label="Ekman depth √(ν/Ω)" value={Number.isFinite(nu) && absOmega > 0 ? formatNumber(ekmanDepth(nu, absOmega) * 1000, 3) : "—"} unit="mm" />
        <Row label="Ekman number ν/(ΩH²)" value={Number.isFinite(nu) && absOmega > 0 && depth > 0 ? formatNumber(ekmanNumber(nu, absOmega, depth), 3) : "—"} />
        <Row label="Spin-up time τ = H/√(νΩ)" value={formatDuration(tau)} />
        <Row label={`Ready at (${p.spinUpTimesToWait} τ after the rate was reached)`} value={time.dateTimeSeconds(ready)} />
        <Row label="Surface drop at the centre" value={surface ? formatNumber(surface.centreDrop * 1000, 3) : "—"} unit="mm" />
        <Row label="Centre-to-rim rise" value={surface ? formatNumber(surface.centreToRimRise * 1000, 3) : "—"} unit="mm" />
        {p.observed ? <Row label="Rossby number U/(|f|L)" note="tracer speed U, tank radius L" value={formatNumber(ro, 2)} /> : null}
      </dl>
      {!tempOk && Number.isFinite(p.temperatureC) ? <p className="mt-2 text-sm text-muted">Water properties cover 0–40 °C.</p> : null}
      <div className="mt-4 flex flex-col gap-3">
        {warn.map((c) => (
          <Notice key={c.kind} kind="caution">
            {c.message}
          </Notice>
        ))}
      </div>
    </Card>
  );
}
