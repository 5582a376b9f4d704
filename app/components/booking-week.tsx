import { useEffect, useMemo, useRef, type CSSProperties, type KeyboardEvent, type ReactNode } from "react";
import { Calendar, dateFnsLocalizer, type Components, type Event as CalendarEvent, type EventWrapperProps } from "react-big-calendar";
import { format, getDay, parse, startOfWeek } from "date-fns";
import { enGB } from "date-fns/locale";
import { Link, useNavigate } from "react-router";
import type { BookingState } from "~/lib/bookings";
import { bookingStateLabels } from "~/lib/bookings";
import { wallTime } from "~/lib/time-format";
import { useLabTime } from "./lab-time";
import { ScrollRegion } from "./ui/scroll-region";

/**
 * react-big-calendar lays events out on the clock of the JavaScript runtime (the server's while
 * rendering, then the browser's). Each instant is handed over as the runtime-local Date that shows
 * the lab's wall-clock time, so the week reads on the lab's clock on both, and hydrates unchanged.
 */
function onLabClock(iso: string, zone: string) {
  const w = wallTime(new Date(iso), zone);
  return new Date(w.year, w.month - 1, w.day, w.hour, w.minute, w.second);
}

// Weeks start on Monday and the clock is 24-hour, as on the lab's printed sheets.
const localizer = dateFnsLocalizer({ format, parse, startOfWeek: (d: Date) => startOfWeek(d, { weekStartsOn: 1 }), getDay, locales: { "en-GB": enGB } });

export interface WeekBooking {
  id: number;
  start: string;
  end: string;
  purpose: string;
  state: BookingState;
  requesterName: string;
}

interface Ev extends CalendarEvent {
  id: number;
  state: BookingState;
}

/**
 * A day's heading as plain text. react-big-calendar's own heading is a `columnheader` outside any
 * `row`, which assistive technology cannot place; the button around it already names the day.
 */
function DayHeading({ label }: { label: string }) {
  return <span>{label}</span>;
}

const percent = (v: string | number | undefined) => (typeof v === "number" ? `${v}%` : v);

/**
 * Arrow keys between the week's bookings: up and down to the one before or after in the same day,
 * left and right to the nearest in time on the closest day that has one, Home and End to the
 * first and last of the week. The order is read from the drawn grid (columns left to right, then
 * top to bottom), so a booking over midnight is reached in both its days.
 */
function moveBetweenBookings(e: KeyboardEvent<HTMLAnchorElement>) {
  const here = e.currentTarget;
  if (e.key === " ") {
    // A booking is a link; Space opens it as well as Enter, as a button would.
    e.preventDefault();
    here.click();
    return;
  }
  if (!["ArrowUp", "ArrowDown", "ArrowLeft", "ArrowRight", "Home", "End"].includes(e.key)) return;
  const week = here.closest(".tankside-week");
  if (!week) return;
  const days = [...week.querySelectorAll(".rbc-time-content > .rbc-day-slot")].map((day) =>
    [...day.querySelectorAll<HTMLAnchorElement>("a[data-booking]")].sort((a, b) => a.getBoundingClientRect().top - b.getBoundingClientRect().top),
  );
  const dayIndex = days.findIndex((d) => d.includes(here));
  const day = days[dayIndex];
  if (!day) return;
  const all = days.flat();
  const top = here.getBoundingClientRect().top;
  let target: HTMLAnchorElement | undefined;
  if (e.key === "Home") target = all[0];
  else if (e.key === "End") target = all[all.length - 1];
  else if (e.key === "ArrowUp" || e.key === "ArrowDown") target = day[day.indexOf(here) + (e.key === "ArrowDown" ? 1 : -1)];
  else {
    const step = e.key === "ArrowRight" ? 1 : -1;
    for (let i = dayIndex + step; i >= 0 && i < days.length && !target; i += step) {
      const candidates = days[i] ?? [];
      target = candidates.reduce<HTMLAnchorElement | undefined>(
        (best, c) => (!best || Math.abs(c.getBoundingClientRect().top - top) < Math.abs(best.getBoundingClientRect().top - top) ? c : best),
        undefined,
      );
    }
  }
  e.preventDefault();
  if (target) {
    target.focus();
    target.scrollIntoView({ block: "nearest", inline: "nearest" });
  }
}

/**
 * A booking in the week, drawn where react-big-calendar places it but as a link to the booking
 * (the library's own is a `div` with role=button that neither Enter nor Space opens). Its name
 * starts with the day, which a screen reader would otherwise not hear.
 */
function BookingInWeek(props: EventWrapperProps<Ev> & { type?: string; children?: ReactNode }) {
  if (props.type !== "time") return <>{props.children}</>;
  const { event, style, label, selected } = props;
  const own = props.getters.eventProp?.(event, event.start ?? new Date(), event.end ?? new Date(), selected);
  const position: CSSProperties = {
    ...own?.style,
    top: percent(style?.top),
    height: percent(style?.height),
    width: percent(style?.width),
    left: percent(style?.xOffset),
  };
  const classes = ["rbc-event", props.className, own?.className, selected ? "rbc-selected" : ""].filter(Boolean).join(" ");
  return (
    <Link to={`/bookings/${event.id}`} className={classes} style={position} data-booking={event.id} onKeyDown={moveBetweenBookings}>
      <span className="sr-only">{event.start ? `${format(event.start, "EEEE d MMMM")}, ` : ""}</span>
      <span className="rbc-event-label">{label}</span>
      <span className="rbc-event-content">{event.title}</span>
    </Link>
  );
}

const calendarParts: Components<Ev> = { eventWrapper: BookingInWeek, week: { header: DayHeading } };

/** One item's week of bookings on react-big-calendar, dressed in Tankside's own look (booking-week.css). */
export function BookingWeek({ bookings, week, itemId }: { bookings: WeekBooking[]; week: string; itemId: number }) {
  const navigate = useNavigate();
  const { zone } = useLabTime();
  const events = useMemo<Ev[]>(
    () =>
      bookings.map((b) => ({
        id: b.id,
        state: b.state,
        title: `${bookingStateLabels[b.state]} · ${b.purpose} (${b.requesterName})`,
        start: onLabClock(b.start, zone),
        end: onLabClock(b.end, zone),
      })),
    [bookings, zone],
  );
  const date = useMemo(() => new Date(`${week}T12:00:00`), [week]);
  // The library's hours grid scrolls on its own; in a week without bookings nothing in it takes the
  // keyboard's focus, so the grid itself does, or a keyboard could not scroll to the evening.
  const box = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const hours = box.current?.querySelector<HTMLElement>(".rbc-time-content");
    if (!hours) return;
    hours.tabIndex = 0;
    hours.setAttribute("role", "region");
    hours.setAttribute("aria-label", "Hours of the week");
  }, [week, events]);
  return (
    <div className="tankside-week" data-testid="booking-week" ref={box}>
      {/* Seven days need more than a phone's width: the week scrolls sideways in its own box there. */}
      <ScrollRegion label="Week of bookings">
        <div className="min-w-[46rem] md:min-w-0">
          <Calendar<Ev>
            localizer={localizer}
            culture="en-GB"
            events={events}
            date={date}
            view="week"
            views={["week"]}
            onView={() => undefined}
            onNavigate={(d) => void navigate(`?item=${itemId}&week=${format(d, "yyyy-MM-dd")}#week`, { preventScrollReset: true })}
            eventPropGetter={(e) => ({ className: `tankside-event tankside-event-${e.state}` })}
            // Bookings are timed, never all-day: one over midnight stays in the time grid, and the empty
            // all-day row (a `row` without cells in the library's markup) is not shown (booking-week.css).
            showMultiDayTimes
            components={calendarParts}
            scrollToTime={new Date(1970, 0, 1, 8)}
            step={30}
            timeslots={2}
            formats={{
              timeGutterFormat: "HH:mm",
              eventTimeRangeFormat: ({ start, end }) => `${format(start, "HH:mm")}–${format(end, "HH:mm")}`,
              dayFormat: "EEE d MMM",
              // "30 Nov – 6 Dec 2026", as the rest of the page writes days (not the library's "November 30 – December 06").
              dayRangeHeaderFormat: ({ start, end }) => `${format(start, "d MMM")} – ${format(end, "d MMM yyyy")}`,
            }}
            messages={{ today: "This week", previous: "Previous week", next: "Next week", noEventsInRange: "No bookings this week." }}
            style={{ height: 640 }}
          />
        </div>
      </ScrollRegion>
    </div>
  );
}
