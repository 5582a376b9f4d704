import { createContext, useContext, useMemo, type ReactNode } from "react";
import { timeFormat, type TimeFormat } from "~/lib/time-format";

// The root loader reads the lab's zone once per request and provides it here, so the server and the
// browser format every time with the same zone (and hydrate to the same text). Outside the provider
// (error pages) times read in UTC, which still names its zone.
const LabTimeContext = createContext<TimeFormat>(timeFormat("UTC"));

export function LabTimeProvider({ zone, children }: { zone: string; children: ReactNode }) {
  const value = useMemo(() => timeFormat(zone), [zone]);
  return <LabTimeContext.Provider value={value}>{children}</LabTimeContext.Provider>;
}

/** Formatters for dates, date-times and times in the lab's zone. */
export function useLabTime(): TimeFormat {
  return useContext(LabTimeContext);
}

/** A date and time in the lab's zone, as a <time> element carrying the instant. */
export function LabDateTime({ value }: { value: string | Date | null | undefined }) {
  const time = useLabTime();
  const iso = value ? new Date(value).toISOString() : undefined;
  return <time dateTime={iso}>{time.dateTime(value)}</time>;
}
