/**
 * Every track of a run checked: each is fitted on its own (./check), those that gave an f with a
 * standard error are combined (./combine-tracks), and the verdict is the decision rule on the
 * combined f. Tracks that could not be fitted (too short, too noisy…) keep their inconclusive result
 * and reason and are left out of the combination. The combined result keeps the one-track shape:
 * its series, circle and drag are the representative track's (the fitted track with the most
 * points), its f, standard error, ratio, interval and verdict the combination's. With one fitted
 * track the combined result is that track's result unchanged.
 */
import { runTheoryCheck } from "./check";
import type { TheoryCheckInput, TheoryCheckResult } from "./check-result";
import { judgeF } from "./check-verdict";
import { combineMeasurements } from "./combine-tracks";
import { formatNumber } from "../number-format";

/** One track's own check, without its plotted series, with where it stands among the others. */
export interface TrackCheck extends Omit<TheoryCheckResult, "series"> {
  /** the track's number in its run (1, 2, 3… as the run page, report, CSV and API show it) */
  trackNumber: number;
  /** whether its f went into the combination */
  combined: boolean;
  /** (f − f combined)/its own standard error (the fit's part); null when left out or alone */
  pull: number | null;
  /** it disagrees with the other tracks beyond its error (see combine-tracks' PULL_LIMIT) */
  flagged: boolean;
}

/** A per-track check as stored; a check made before every track was checked named its track by database id only. */
export type StoredTrackCheck = Omit<TrackCheck, "trackNumber"> & { trackNumber: number | null };

export interface TrackCombination {
  /** tracks combined */
  n: number;
  /** tracks given */
  of: number;
  /** the track whose series, circle and drag the combined result carries */
  representativeTrack: number;
  /** weighted mean of the combined tracks' f, s⁻¹ */
  fMean: number;
  /** its standard error from the fits alone, before widening */
  stdError: number;
  chi2: number;
  dof: number;
  birgeRatio: number | null;
  pValue: number | null;
  /** the standard error was multiplied by this (the Birge ratio when above 1, else 1) */
  scale: number;
  consistent: boolean;
  /** what the combination says about the tracks, in words a technician reads */
  words: string;
}

export interface TrackChecks {
  /** the combined check, in the one-track shape every reader knows */
  check: TheoryCheckResult;
  /** one per track, in the order given */
  checks: TrackCheck[];
  combination: TrackCombination | null;
}

const smallNumbers = ["no", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten"];
const count = (n: number) => smallNumbers[n] ?? String(n);
const capitalise = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

function listNumbers(noun: string, numbers: number[]): string {
  const plural = numbers.length === 1 ? noun : `${noun}s`;
  if (numbers.length <= 1) return `${plural} ${numbers.join("")}`;
  return `${plural} ${numbers.slice(0, -1).join(", ")} and ${numbers[numbers.length - 1]}`;
}

/** The statistical part of a track's standard error: the timing check's part is common to every track, so it is not averaged down. */
function fitStdError(r: TheoryCheckResult): number {
  const total = r.fStdError ?? Number.NaN;
  const timing = r.fStdErrorTiming ?? 0;
  return Math.sqrt(Math.max(0, total * total - timing * timing));
}

function withoutSeries(r: TheoryCheckResult): Omit<TheoryCheckResult, "series"> {
  const { series: _series, ...rest } = r;
  return rest;
}

/**
 * Checks each track and combines them. `noun` names a tracer in the words ("float", "dye patch");
 * tracks are given with their numbers in the run.
 */
export function checkTracks(tracks: readonly { number: number; input: TheoryCheckInput }[], noun = "track"): TrackChecks | null {
  if (!tracks.length) return null;
  const results = tracks.map((t) => ({ number: t.number, result: runTheoryCheck(t.input) }));
  const fitted = results.filter(({ result: r }) => r.fMeasured !== null && Number.isFinite(fitStdError(r)) && fitStdError(r) > 0);
  const byPoints = (a: (typeof results)[number], b: (typeof results)[number]) => b.result.nPoints - a.result.nPoints || a.number - b.number;
  const representative = [...(fitted.length ? fitted : results)].sort(byPoints)[0]!;
  const combination = combineMeasurements(fitted.map(({ result: r }) => ({ value: r.fMeasured!, stdError: fitStdError(r) })));
  const checks: TrackCheck[] = results.map(({ number, result }) => {
    const k = fitted.findIndex((f) => f.number === number);
    return {
      ...withoutSeries(result),
      trackNumber: number,
      combined: k >= 0,
      pull: k >= 0 && combination && combination.n > 1 ? (combination.pulls[k] ?? null) : null,
      flagged: k >= 0 && combination ? combination.flagged[k] === true : false,
    };
  });
  const leftOut = results.filter((r) => !fitted.includes(r)).map((r) => r.number);
  const leftOutWords = leftOut.length
    ? ` ${capitalise(listNumbers(noun, leftOut))} could not be fitted and ${leftOut.length === 1 ? "is" : "are"} left out (the table says why).`
    : "";

  if (!combination || fitted.length === 1) {
    const words =
      fitted.length === 1 && results.length > 1
        ? `Only ${listNumbers(noun, [representative.number])} could be fitted, so the verdict is its own.${leftOutWords}`
        : fitted.length === 1
          ? `One ${noun} was checked.`
          : `No ${noun} could be fitted.`;
    return {
      check: representative.result,
      checks,
      combination:
        combination && fitted.length === 1
          ? {
              n: 1,
              of: results.length,
              representativeTrack: representative.number,
              fMean: combination.mean,
              stdError: combination.stdError,
              chi2: 0,
              dof: 0,
              birgeRatio: null,
              pValue: null,
              scale: 1,
              consistent: true,
              words: words.trim(),
            }
          : null,
    };
  }

  // Several tracks: the words on how they agree, then the verdict on the combined f.
  const n = fitted.length;
  const stats = `χ² = ${formatNumber(combination.chi2, 3)} for ${combination.dof} degree${combination.dof === 1 ? "" : "s"} of freedom, p = ${formatNumber(combination.pValue, 2)}`;
  const flaggedNumbers = fitted.filter((_, k) => combination.flagged[k]).map((f) => f.number);
  const widened =
    combination.scale > 1 ? ` The combined error is widened ×${formatNumber(combination.scale, 2)} (the Birge ratio) to allow for the scatter.` : "";
  let agreement: string;
  if (combination.consistent) {
    agreement = `The ${count(n)} ${noun}s agree with each other within their errors (${stats}).`;
    if (combination.scale > 1)
      agreement += ` They scatter a little more than their errors suggest, so the combined error is widened ×${formatNumber(combination.scale, 2)}.`;
  } else if (flaggedNumbers.length) {
    const one = flaggedNumbers.length === 1;
    agreement = `${capitalise(listNumbers(noun, flaggedNumbers))} ${one ? "disagrees" : "disagree"} with the others beyond ${one ? "its" : "their"} error (${stats}); look at ${one ? "that track" : "those tracks"} before trusting the verdict.${combination.restConsistent ? "" : " The rest also disagree among themselves."}${widened}`;
  } else {
    agreement = `The ${count(n)} ${noun}s disagree with each other beyond their errors (${stats}), and none can be singled out.${widened}`;
  }

  const rep = representative.result;
  const timingRel = rep.fStdErrorTiming !== null && rep.fMeasured ? rep.fStdErrorTiming / Math.abs(rep.fMeasured) : null;
  const fMeasured = combination.mean;
  const fStdErrorTiming = timingRel === null ? null : Math.abs(fMeasured) * timingRel;
  const fStdError = Math.hypot(combination.scaledStdError, fStdErrorTiming ?? 0);
  const rotating = rep.series.rotating;
  const duration = rotating.length ? rotating[rotating.length - 1]!.t - rotating[0]!.t : 0;
  const judged = judgeF({
    fMeasured,
    fStdError,
    fPredicted: rep.fPredicted!,
    fPredictedStdError: rep.fPredictedStdError ?? 0,
    omegaSource: rep.omegaSource,
    tolerance: rep.settings.tolerance,
    cameraMode: tracks[0]!.input.cameraMode,
    periods: rep.omega ? duration / (Math.PI / Math.abs(rep.omega)) : Number.NaN,
    measuredWords: `f measured (the weighted mean of ${count(n)} ${noun}s)`,
    tracks: n,
  });
  const timingWords =
    fStdErrorTiming !== null ? " The timing check's uncertainty is common to every track, so it is added to the combined error once, not averaged down." : "";
  const check: TheoryCheckResult = {
    ...rep,
    fMeasured,
    fStdError,
    fStdErrorTiming,
    ...judged,
    reason: `${agreement}${leftOutWords} ${judged.reason}${timingWords}`,
  };
  return {
    check,
    checks,
    combination: {
      n,
      of: results.length,
      representativeTrack: representative.number,
      fMean: combination.mean,
      stdError: combination.stdError,
      chi2: combination.chi2,
      dof: combination.dof,
      birgeRatio: combination.birgeRatio,
      pValue: combination.pValue,
      scale: combination.scale,
      consistent: combination.consistent,
      words: `${agreement}${leftOutWords}`,
    },
  };
}
