import { useMemo } from "react";
import { Calendar, dateFnsLocalizer, type Event as CalendarEvent } from "react-big-calendar";
import { format, getDay, parse, startOfWeek } from "date-fns";
import { enGB } from "date-fns/locale";
import { useNavigate } from "react-router";
import type { BookingState } from "~/lib/bookings";
import { bookingStateLabels } from "~/lib/bookings";
import { wallTime } from "~/lib/time-format";
import { useLabTime } from "./lab-time";

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
  return (
    <div className="tankside-week" data-testid="booking-week">
      <Calendar<Ev>
        localizer={localizer}
        culture="en-GB"
        events={events}
        date={date}
        view="week"
        views={["week"]}
        onView={() => undefined}
        onNavigate={(d) => void navigate(`?item=${itemId}&week=${format(d, "yyyy-MM-dd")}#week`, { preventScrollReset: true })}
        onSelectEvent={(e) => void navigate(`/bookings/${e.id}`)}
        eventPropGetter={(e) => ({ className: `tankside-event tankside-event-${e.state}` })}
        // Bookings are timed, never all-day: one over midnight stays in the time grid, and the empty
        // all-day row (a `row` without cells in the library's markup) is not shown (booking-week.css).
        showMultiDayTimes
        components={{ week: { header: DayHeading } }}
        scrollToTime={new Date(1970, 0, 1, 8)}
        step={30}
        timeslots={2}
        formats={{
          timeGutterFormat: "HH:mm",
          eventTimeRangeFormat: ({ start, end }) => `${format(start, "HH:mm")}–${format(end, "HH:mm")}`,
          dayFormat: "EEE d MMM",
        }}
        messages={{ today: "This week", previous: "Previous week", next: "Next week", noEventsInRange: "No bookings this week." }}
        style={{ height: 640 }}
      />
    </div>
  );
}
