import { cn } from "../lib/cn";

/**
 * A fragment's name on one line in a narrow card. An untitled fragment is named after its scan
 * and position ("bed-07 · 3"); when the line is too short, the scan's name is cut in its middle
 * and its end and the position stay in sight, since they tell the pieces apart.
 */
export function FragmentName({
  fragment,
  className,
}: {
  fragment: { title: string | null; scanName: string; position: number };
  className?: string;
}) {
  const title = fragment.title?.trim();
  const base = fragment.scanName.replace(/\.[^.]+$/, "");
  const full = title || `${base} · ${fragment.position}`;
  if (title) {
    return (
      <span className={cn("block truncate", className)} title={full}>
        {title}
      </span>
    );
  }
  // Scan names of one session often differ only at their end ("…-bed-01", "…-bed-02"): the cut
  // goes in the middle, keeping the last few characters beside the position.
  const tailLength = base.length > 14 ? 6 : 0;
  const head = base.slice(0, base.length - tailLength);
  const tail = base.slice(base.length - tailLength);
  return (
    <span className={cn("flex min-w-0", className)} title={full}>
      <span className="truncate">{head}</span>
      <span className="shrink-0 whitespace-pre">
        {tail} · {fragment.position}
      </span>
    </span>
  );
}
