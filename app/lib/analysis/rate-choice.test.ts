import { describe, expect, it } from "vitest";
import { chooseRate } from "./rate-choice";
import { rpmToRadPerS } from "./units";

const set = rpmToRadPerS(10);
const measured = (rpm: number, seRpm: number) => ({ omega: rpmToRadPerS(rpm), stdError: rpmToRadPerS(seRpm), method: "table mark", nPoints: 200 });

describe("which rate the check uses, and a disagreement of the footage's rate", () => {
  it("uses the calibrated rate by default and flags footage beyond their combined uncertainty", () => {
    const calibrated = { value: rpmToRadPerS(10.01), stdError: rpmToRadPerS(0.01), calibrationId: 4 };
    const choice = chooseRate({ omegaSet: set, omegaCalibrated: calibrated, measured: measured(9.62, 0.02), use: "calibrated" });
    expect(choice.used).toBe("rate calibration");
    expect(choice.omega).toBe(calibrated.value);
    expect(choice.disagreement).toBe(
      "The table turned at 9.620 ± 0.020 rpm, not 10.010 ± 0.010 rpm from the rate calibration (beyond their combined 95 % uncertainty), by the table mark in the frames.",
    );
    // Within 1.96 combined standard errors (0.044 rpm): no flag.
    expect(chooseRate({ omegaSet: set, omegaCalibrated: calibrated, measured: measured(9.98, 0.02), use: "calibrated" }).disagreement).toBeNull();
  });

  it("without a calibration, judges the footage against the set rate with a 1 % tolerance", () => {
    expect(chooseRate({ omegaSet: set, measured: measured(9.62, 0.02), use: "calibrated" }).disagreement).toMatch(
      /^The table turned at 9\.620 ± 0\.020 rpm, not the set 10 rpm/,
    );
    expect(chooseRate({ omegaSet: set, measured: measured(9.92, 0.02), use: "calibrated" }).disagreement).toBeNull();
    expect(chooseRate({ omegaSet: set, measured: measured(9.85, 0.02), use: "calibrated" }).disagreement).not.toBeNull();
  });

  it("uses the footage's rate when the lab chooses it and there is one, the calibrated one otherwise", () => {
    const choice = chooseRate({ omegaSet: set, measured: measured(9.62, 0.02), use: "footage" });
    expect(choice.used).toBe("rate from the footage");
    expect(choice.omega).toBeCloseTo(rpmToRadPerS(9.62), 12);
    expect(choice.stdError).toBeCloseTo(rpmToRadPerS(0.02), 12);
    const none = chooseRate({ omegaSet: set, measured: null, use: "footage" });
    expect(none.used).toBe("set rate");
    expect(none.why).toMatch(/none was read from these frames/);
  });
});
