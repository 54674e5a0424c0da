import { cn } from "../lib/cn";

/** Online/offline in words, with a dot that is filled or hollow (not colour alone). */
export function OnlineBadge({
  online,
  onlineText = "Online",
  offlineText = "Offline",
  className,
}: {
  online: boolean;
  onlineText?: string;
  offlineText?: string;
  className?: string;
}) {
  return (
    <span
      className={cn(
        "inline-flex items-center gap-1.5 rounded-full border px-2 py-0.5 text-xs font-medium",
        online ? "border-accent/40 bg-accent-faint text-accent-strong" : "border-brick/40 bg-brick-soft text-brick",
        className,
      )}
    >
      <span
        aria-hidden="true"
        className={cn("size-2 rounded-full border", online ? "border-accent bg-accent" : "border-brick bg-transparent")}
      />
      {online ? onlineText : offlineText}
    </span>
  );
}
