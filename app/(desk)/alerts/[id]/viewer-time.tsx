"use client";
// A time in the viewer's own time zone, with UTC on hover. The server cannot know the viewer's
// zone: it renders UTC, and the browser shows its local time (useSyncExternalStore gives the server
// render and hydration the UTC text, then the browser's, without a hydration mismatch).
import { useSyncExternalStore } from "react";

const noSubscription = () => () => undefined;

function utcText(iso: string): string {
  return `${iso.slice(0, 19).replace("T", " ")} UTC`;
}

export function ViewerTime({ iso }: { iso: string }) {
  const local = useSyncExternalStore(
    noSubscription,
    () => new Intl.DateTimeFormat(undefined, { dateStyle: "medium", timeStyle: "long" }).format(new Date(iso)),
    () => null,
  );
  return (
    <time dateTime={iso} title={utcText(iso)}>
      {local ?? utcText(iso)}
    </time>
  );
}
