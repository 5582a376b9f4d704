/**
 * How Tankside shows instants and durations: one place, used by pages, e-mails and printouts.
 *
 * Instants are shown in the lab's time zone (a lab setting, an IANA name), day first, 24-hour clock,
 * with the zone's short name as CLDR's British English gives it: "CET", "GMT" or "UTC" where that
 * locale has a name in common use, otherwise the offset ("GMT-5", "GMT+5:30"). The offset form can
 * never be mistaken for another zone, which abbreviations such as "CST" can. Calendar dates are days
 * in the lab's zone and carry no zone. Stored and exported times stay UTC (ISO 8601 with Z).
 */

type Instant = string | Date | null | undefined;

const LOCALE = "en-GB";
const cache = new Map<string, Intl.DateTimeFormat>();

function formatter(
  zone: string,
  kind: "date" | "dateTime" | "dateTimeSeconds" | "time" | "timeSeconds" | "zoneName" | "weekday" | "parts",
): Intl.DateTimeFormat {
  const key = `${zone}|${kind}`;
  let f = cache.get(key);
  if (!f) {
    const options: Intl.DateTimeFormatOptions = { timeZone: zone };
    if (kind === "date" || kind === "dateTime" || kind === "dateTimeSeconds") Object.assign(options, { day: "numeric", month: "short", year: "numeric" });
    if (kind === "dateTime" || kind === "time") Object.assign(options, { hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
    if (kind === "timeSeconds" || kind === "dateTimeSeconds")
      Object.assign(options, { hour: "2-digit", minute: "2-digit", second: "2-digit", hourCycle: "h23" });
    if (kind === "zoneName") Object.assign(options, { timeZoneName: "short" });
    if (kind === "weekday") Object.assign(options, { weekday: "long", day: "numeric", month: "short" });
    if (kind === "parts")
      Object.assign(options, { year: "numeric", month: "2-digit", day: "2-digit", hour: "2-digit", minute: "2-digit", second: "2-digit", hourCycle: "h23" });
    f = new Intl.DateTimeFormat(LOCALE, options);
    cache.set(key, f);
  }
  return f;
}

function toDate(value: Instant): Date | null {
  if (!value) return null;
  const d = typeof value === "string" ? new Date(value) : value;
  return Number.isNaN(d.getTime()) ? null : d;
}

/** True for a time zone name Intl knows (IANA names as listed by Intl.supportedValuesOf, their aliases, and "UTC"). */
export function isTimeZone(name: string): boolean {
  if (!name || name.length > 64) return false;
  try {
    const resolved = new Intl.DateTimeFormat(LOCALE, { timeZone: name }).resolvedOptions().timeZone;
    return resolved === "UTC" || timeZoneNames().includes(resolved);
  } catch {
    return false;
  }
}

let names: string[] | null = null;
/** The zones offered to choose from: Intl's list and "UTC". */
export function timeZoneNames(): string[] {
  names ??= ["UTC", ...Intl.supportedValuesOf("timeZone").filter((z) => z !== "UTC")];
  return names;
}

/** The zone of the process (the server's, or the browser's), as Intl reports it. */
export function systemTimeZone(): string {
  return Intl.DateTimeFormat().resolvedOptions().timeZone || "UTC";
}

/** The wall-clock fields of an instant in a zone. */
export function wallTime(d: Date, zone: string) {
  const parts = Object.fromEntries(
    formatter(zone, "parts")
      .formatToParts(d)
      .map((p) => [p.type, p.value]),
  );
  return {
    year: Number(parts.year),
    month: Number(parts.month),
    day: Number(parts.day),
    hour: Number(parts.hour),
    minute: Number(parts.minute),
    second: Number(parts.second),
  };
}

/** Milliseconds the zone is ahead of UTC at that instant. */
function offsetMs(d: Date, zone: string) {
  const w = wallTime(d, zone);
  const asUtc = Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute, w.second);
  return asUtc - Math.floor(d.getTime() / 1000) * 1000;
}

/** The zone's short name at that instant ("CET", "GMT-5"). */
export function zoneName(d: Date, zone: string): string {
  return (
    formatter(zone, "zoneName")
      .formatToParts(d)
      .find((p) => p.type === "timeZoneName")?.value ?? zone
  );
}

const pad = (n: number, w = 2) => String(n).padStart(w, "0");

/** The value of a datetime-local field ("2026-12-03T09:50") showing this instant on the lab's clock. */
export function toZonedInput(value: Instant, zone: string): string {
  const d = toDate(value);
  if (!d) return "";
  const w = wallTime(d, zone);
  return `${pad(w.year, 4)}-${pad(w.month)}-${pad(w.day)}T${pad(w.hour)}:${pad(w.minute)}`;
}

/** The lab's calendar day of an instant, "2026-12-03". */
export function zonedDay(value: Instant, zone: string): string {
  return toZonedInput(value, zone).slice(0, 10);
}

/**
 * The instant a wall-clock time on the lab's clock stands for ("2026-12-03T09:50" → 08:50Z in
 * Berlin in winter). A time that falls in the hour skipped when clocks go forward is read with the
 * offset from before the change; a time that occurs twice when they go back is the first of the two.
 * A string with its own zone (Z or ±hh:mm) is taken as it is. Null when it is not a time.
 */
export function fromZonedInput(text: string, zone: string): Date | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?)?$/.exec(text.trim());
  if (!m) {
    if (/(?:Z|[+-]\d{2}:?\d{2})$/i.test(text.trim())) {
      const d = new Date(text.trim());
      return Number.isNaN(d.getTime()) ? null : d;
    }
    return null;
  }
  const [y, mo, da, h, mi, s] = m.slice(1).map((v) => Number(v ?? 0)) as [number, number, number, number, number, number];
  const asUtc = Date.UTC(y, mo - 1, da, h, mi, s);
  if (Number.isNaN(asUtc)) return null;
  // The zone's offsets a day either side cover any change of clocks on that day.
  const before = offsetMs(new Date(asUtc - 86_400_000), zone);
  const after = offsetMs(new Date(asUtc + 86_400_000), zone);
  const candidates = [asUtc - before, asUtc - after].filter((t) => {
    const w = wallTime(new Date(t), zone);
    return Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute, w.second) === asUtc;
  });
  // The earlier of two where the clock repeats; the offset from before the change where it skipped.
  return new Date(candidates.length ? Math.min(...candidates) : asUtc - before);
}

export interface TimeFormat {
  zone: string;
  /** "3 Dec 2026" (the lab's day). */
  date(value: Instant): string;
  /** "3 Dec 2026, 09:50 CET". */
  dateTime(value: Instant): string;
  /** "3 Dec 2026, 09:50:12 CET": for a moment people wait for, where the day is not obvious. */
  dateTimeSeconds(value: Instant): string;
  /** "09:50 CET". */
  time(value: Instant): string;
  /** "09:50:12 CET". */
  timeSeconds(value: Instant): string;
  /** "09:50–11:50 CET" (clock times only; the zone named once unless it changes between them). */
  timeRange(start: Instant, end: Instant): string;
  /** "3 Dec 2026, 09:50–11:50 CET" on one day, else both ends in full. */
  range(start: Instant, end: Instant): string;
  /** "Today", "Tomorrow" or "Thursday 3 Dec", counted in the lab's days from `now`. */
  dayLabel(value: Instant, now?: Date): string;
}

/** Formatters bound to a zone; an unknown zone falls back to UTC rather than throwing on a page. */
export function timeFormat(zone: string): TimeFormat {
  const z = isTimeZone(zone) ? zone : "UTC";
  const dash = "—";
  const hm = (d: Date) => formatter(z, "time").format(d);
  const dateTime = (value: Instant) => {
    const d = toDate(value);
    return d ? `${formatter(z, "dateTime").format(d)} ${zoneName(d, z)}` : dash;
  };
  return {
    zone: z,
    date: (value) => {
      const d = toDate(value);
      return d ? formatter(z, "date").format(d) : dash;
    },
    dateTime,
    dateTimeSeconds: (value) => {
      const d = toDate(value);
      return d ? `${formatter(z, "dateTimeSeconds").format(d)} ${zoneName(d, z)}` : dash;
    },
    time: (value) => {
      const d = toDate(value);
      return d ? `${hm(d)} ${zoneName(d, z)}` : dash;
    },
    timeSeconds: (value) => {
      const d = toDate(value);
      return d ? `${formatter(z, "timeSeconds").format(d)} ${zoneName(d, z)}` : dash;
    },
    timeRange: (start, end) => {
      const a = toDate(start);
      const b = toDate(end);
      if (!a || !b) return dash;
      return zoneName(a, z) === zoneName(b, z) ? `${hm(a)}–${hm(b)} ${zoneName(a, z)}` : `${hm(a)} ${zoneName(a, z)}–${hm(b)} ${zoneName(b, z)}`;
    },
    range: (start, end) => {
      const a = toDate(start);
      const b = toDate(end);
      if (!a || !b) return `${dateTime(start)} – ${dateTime(end)}`;
      if (zonedDay(a, z) === zonedDay(b, z) && zoneName(a, z) === zoneName(b, z)) {
        return `${formatter(z, "date").format(a)}, ${hm(a)}–${hm(b)} ${zoneName(a, z)}`;
      }
      return `${dateTime(a)} – ${dateTime(b)}`;
    },
    dayLabel: (value, now = new Date()) => {
      const d = toDate(value);
      if (!d) return dash;
      const day = (x: Date) => Date.parse(`${zonedDay(x, z)}T00:00:00Z`);
      const diff = Math.round((day(d) - day(now)) / 86_400_000);
      return diff === 0 ? "Today" : diff === 1 ? "Tomorrow" : formatter(z, "weekday").format(d).replace(",", "");
    },
  };
}

const durationNumber = new Intl.NumberFormat(LOCALE, { maximumFractionDigits: 1 });

/**
 * A duration given in seconds, one rule everywhere: seconds below 2 minutes, minutes below 2 hours,
 * hours beyond, to one decimal ("45 s", "9.8 min", "2.5 h").
 */
export function formatDuration(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return "—";
  const abs = Math.abs(seconds);
  if (abs < 120) return `${durationNumber.format(seconds)} s`;
  if (abs < 7200) return `${durationNumber.format(seconds / 60)} min`;
  return `${durationNumber.format(seconds / 3600)} h`;
}

/** "2026-12-03" plus n calendar days (n may be negative). */
export function addDays(day: string, n: number): string {
  const [y, m, d] = day.split("-").map(Number) as [number, number, number];
  return new Date(Date.UTC(y, m - 1, d + n)).toISOString().slice(0, 10);
}

/** The Monday of a calendar day's week, "2026-12-07" for any day from the 7th to the 13th. */
export function mondayOf(day: string): string {
  const weekday = new Date(`${day}T12:00:00Z`).getUTCDay();
  return addDays(day, -((weekday + 6) % 7));
}
