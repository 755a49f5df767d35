"use client";
// A UTC time that shows the reader's own local time on hover. The server cannot know the
// reader's time zone, so the title is filled in by the browser; useSyncExternalStore gives the
// server render (and hydration) no title and the browser its own, without a hydration mismatch.
import { useSyncExternalStore } from "react";

const noSubscription = () => () => undefined;
// dateStyle/timeStyle cannot be combined with timeZoneName, so the parts are named one by one.
const localFormat = new Intl.DateTimeFormat(undefined, {
  year: "numeric",
  month: "short",
  day: "numeric",
  hour: "2-digit",
  minute: "2-digit",
  second: "2-digit",
  timeZoneName: "short",
});

export function LocalTime({ iso, children }: { iso: string; children: React.ReactNode }) {
  const local = useSyncExternalStore(
    noSubscription,
    () => `${localFormat.format(new Date(iso))} (your time)`,
    () => undefined,
  );
  return (
    <time dateTime={iso} title={local}>
      {children}
    </time>
  );
}
