import { cn } from "../lib/cn";

/**
 * A fragment's name on one line in a narrow card. An untitled fragment is named after its scan
 * and position ("bed-07 · 3"); when the line is too short, the scan's name is cut and the
 * position stays in sight, since it is what tells the pieces of one scan apart.
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
  return (
    <span className={cn("flex min-w-0", className)} title={full}>
      <span className="truncate">{base}</span>
      <span className="shrink-0 whitespace-pre"> · {fragment.position}</span>
    </span>
  );
}
