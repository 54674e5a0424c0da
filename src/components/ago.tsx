import { formatAgo, formatDateTimeLong, useNow } from "../lib/time";

/** "12 s ago", counting up live, with the exact time in a tooltip and a <time> element. */
export function Ago({ iso, className }: { iso: string; className?: string }) {
  const now = useNow(1000);
  return (
    <time dateTime={iso} title={formatDateTimeLong(iso)} className={className}>
      {formatAgo(iso, now)}
    </time>
  );
}
