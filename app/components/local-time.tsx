"use client";
// A UTC time that shows the reader's own local time on hover. The server cannot know the
// reader's time zone, so the title is filled in by the browser; useSyncExternalStore gives the
// server render (and hydration) no title and the browser its own, without a hydration mismatch.
import { useSyncExternalStore } from "react";

const noSubscription = () => () => undefined;

export function LocalTime({ iso, children }: { iso: string; children: React.ReactNode }) {
  const local = useSyncExternalStore(
    noSubscription,
    () => `${new Intl.DateTimeFormat(undefined, { dateStyle: "medium", timeStyle: "medium", timeZoneName: "short" }).format(new Date(iso))} (your time)`,
    () => undefined,
  );
  return (
    <time dateTime={iso} title={local}>
      {children}
    </time>
  );
}
