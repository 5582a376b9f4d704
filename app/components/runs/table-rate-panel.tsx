import type { RateChoice } from "~/lib/analysis/rate-choice";
import { formatNumber, formatWithError } from "~/lib/number-format";
import { Fact, Facts } from "~/components/ui/facts";
import { Notice } from "~/components/ui/notice";

/** The run page's summary of the table's rate (see app/.server/runs/rate-from-footage.ts). */
export interface TableRateView {
  setRpm: number;
  calibrated: { rpm: number; stdErrorRpm: number; calibrationId: number } | null;
  measured: { rpm: number; stdErrorRpm: number; method: string; frames: number; sameSense: boolean } | null;
  note: string | null;
  disagreement: string | null;
  why: string;
}

const methodWords: Record<string, string> = {
  "table mark": "from the mark on the table",
  surroundings: "from the surroundings turning past",
};

/** Set, calibrated and measured rates side by side; what the current check used and why; a disagreement flagged. */
export function TableRatePanel({ rate, checkRate }: { rate: TableRateView; checkRate: RateChoice | null }) {
  return (
    <div className="flex flex-col gap-4" data-testid="table-rate">
      {rate.disagreement ? (
        <Notice kind="caution" title="The footage disagrees with the rate in force">
          {rate.disagreement}
        </Notice>
      ) : null}
      <Facts>
        <Fact label="Set rate">{formatNumber(rate.setRpm, 4)} rpm</Fact>
        <Fact label="Rate calibration">
          {rate.calibrated
            ? `${formatWithError(rate.calibrated.rpm, rate.calibrated.stdErrorRpm)} rpm (record #${rate.calibrated.calibrationId})`
            : "none in force"}
        </Fact>
        <Fact label="Measured from the footage">
          {rate.measured
            ? `${formatWithError(rate.measured.rpm, rate.measured.stdErrorRpm)} rpm, ${methodWords[rate.measured.method] ?? rate.measured.method} in ${rate.measured.frames} frames${rate.measured.sameSense ? "" : ", turning the other way"}`
            : (rate.note ?? "not measured (the frames have not been tracked since the rate was first read)")}
        </Fact>
        <Fact label="Used by the check">{checkRate ? `${checkRate.used}: ${checkRate.why}` : rate.why}</Fact>
      </Facts>
    </div>
  );
}
