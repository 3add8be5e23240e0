import { useEffect, useState } from "react";

function hhmm(date: Date, timeZone?: string): string {
  return new Intl.DateTimeFormat("en-GB", { hour: "2-digit", minute: "2-digit", hour12: false, timeZone }).format(date);
}

// The server renders HH:MM in UTC (so the first paint matches on both sides); the browser then shows its own time zone.
export function LocalClock({ iso }: { iso: string }) {
  const date = new Date(iso);
  const [text, setText] = useState(() => `${hhmm(date, "UTC")} UTC`);
  useEffect(() => setText(hhmm(new Date(iso))), [iso]);
  return <time dateTime={iso}>{text}</time>;
}
