import { Form } from "react-router";
import { useLabTime } from "~/components/lab-time";
import { Button } from "~/components/ui/button";
import { Card } from "~/components/ui/card";
import type { BookingsPage } from "~/.server/bookings-page";

/** The person's secret calendar feed address: made, made anew (the old one stops) or stopped. */
export function CalendarFeedCard({ feed }: { feed: BookingsPage["feed"] }) {
  const time = useLabTime();
  return (
    <Card title="Your approved bookings in your calendar" className="mt-6">
      <p className="mb-3">
        Calendar apps cannot sign in, so your feed has its own secret address. Anyone with the address sees your approved bookings; make a new one to shut the
        old one out.
      </p>
      {feed ? (
        <p className="mb-3 text-sm text-muted">
          Current address starts with <code>{feed.prefix}…</code>
          {feed.lastUsedAt ? `, last read ${time.dateTime(feed.lastUsedAt)}` : ", not read yet"}.
        </p>
      ) : null}
      <div className="flex flex-wrap gap-3">
        <Form method="post" action="/bookings" preventScrollReset>
          <Button tone="plain" type="submit" name="intent" value="feed">
            {feed ? "Make a new feed address" : "Make my feed address"}
          </Button>
        </Form>
        {feed ? (
          <Form method="post" action="/bookings" preventScrollReset>
            <Button tone="danger" type="submit" name="intent" value="feed-revoke">
              Stop the feed
            </Button>
          </Form>
        ) : null}
      </div>
    </Card>
  );
}
