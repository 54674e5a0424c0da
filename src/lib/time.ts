import { useEffect, useState } from "react";

/** The current time, re-read every `intervalMs`, so "12 s ago" keeps counting. */
export function useNow(intervalMs = 1000): number {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    const timer = setInterval(() => setNow(Date.now()), intervalMs);
    return () => clearInterval(timer);
  }, [intervalMs]);
  return now;
}

/** "just now", "12 s ago", "4 min ago", "3 h ago", "2 days ago". */
export function formatAgo(iso: string, now: number): string {
  const seconds = Math.max(0, Math.round((now - Date.parse(iso)) / 1000));
  if (seconds < 2) return "just now";
  if (seconds < 60) return `${seconds} s ago`;
  const minutes = Math.floor(seconds / 60);
  if (minutes < 60) return `${minutes} min ago`;
  const hours = Math.floor(minutes / 60);
  if (hours < 48) return `${hours} h ago`;
  const days = Math.floor(hours / 24);
  return `${days} days ago`;
}

const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: "medium", timeStyle: "short" });
const dateTimeLong = new Intl.DateTimeFormat(undefined, {
  dateStyle: "medium",
  timeStyle: "medium",
});

/** A date and time for lists: "3 Mar 2026, 14:05". */
export function formatDateTime(iso: string): string {
  return dateTime.format(new Date(iso));
}

/** A date and time with seconds, for tooltips and detail pages. */
export function formatDateTimeLong(iso: string): string {
  return dateTimeLong.format(new Date(iso));
}

const shortThisYear = new Intl.DateTimeFormat(undefined, {
  day: "numeric",
  month: "short",
  hour: "2-digit",
  minute: "2-digit",
});
const shortOtherYear = new Intl.DateTimeFormat(undefined, {
  day: "numeric",
  month: "short",
  year: "numeric",
});

/** A compact date for table cells: the time this year, the year otherwise. */
export function formatShortDateTime(iso: string): string {
  const date = new Date(iso);
  return date.getFullYear() === new Date().getFullYear() ? shortThisYear.format(date) : shortOtherYear.format(date);
}
