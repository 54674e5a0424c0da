import { useState } from "react";
import { Panel } from "../../../components/panel";
import { cn } from "../../../lib/cn";
import { batchDownloadUrl } from "../api/get-batch-report";

const PACKS = [
  { value: "plain", label: "Files and CSV", hint: "Each output with its sizes, effective DPI and checksum" },
  { value: "listing", label: "Listing pack", hint: "The same, with a short rights notice for sale or publication" },
] as const;

/** The zip of the batch's files with a CSV of each output; the listing pack adds a rights notice. */
export function DownloadPanel({
  batchId,
  ready,
  fileCount,
  replacedCount = 0,
}: {
  batchId: string;
  ready: boolean;
  /** Files the zip holds: the outputs made and still kept. */
  fileCount: number;
  /** Outputs whose files a later, replacing run removed. */
  replacedCount?: number;
}) {
  const [pack, setPack] = useState<"plain" | "listing">("plain");
  return (
    <Panel title="Download" titleId="batch-download">
      <div className="flex flex-col gap-3">
        <fieldset className="flex flex-col gap-2">
          <legend className="sr-only">Pack</legend>
          {PACKS.map((p) => (
            <label key={p.value} className="flex items-start gap-2 text-sm text-ink">
              <input
                type="radio"
                name="pack"
                checked={pack === p.value}
                onChange={() => setPack(p.value)}
                className="mt-0.5 size-4 accent-accent"
              />
              <span>
                {p.label}
                <span className="block text-[11px] text-ink-muted">{p.hint}</span>
              </span>
            </label>
          ))}
        </fieldset>
        {pack === "listing" && (
          <p className="rounded-md border border-ochre/30 bg-ochre-soft/60 px-3 py-2 text-xs text-ochre" data-testid="rights-caution">
            Pieces cut from printed publications may still be under copyright: check rights and licences under local law before selling or
            publishing them.
          </p>
        )}
        <a
          href={ready ? batchDownloadUrl(batchId, pack) : undefined}
          aria-disabled={!ready}
          download
          data-testid="batch-download"
          className={cn(
            "inline-flex h-10 items-center justify-center rounded-md px-4 text-sm font-medium",
            ready
              ? "bg-accent text-paper-50 hover:bg-accent-strong"
              : "cursor-not-allowed border border-paper-300 bg-paper-200 text-ink-muted",
          )}
        >
          Download zip{fileCount > 0 ? ` (${fileCount} ${fileCount === 1 ? "file" : "files"})` : ""}
        </a>
        {replacedCount > 0 && (
          <p className="text-[11px] text-ink-muted" data-testid="replaced-note">
            {replacedCount === 1 ? "1 output was" : `${replacedCount} outputs were`} replaced by a later run;
            {replacedCount === 1 ? " its file is" : " their files are"} not in the zip.
          </p>
        )}
        {!ready && (
          <p className="text-[11px] text-ink-muted">
            {replacedCount > 0 ? "Every file of this batch was replaced by a later run." : "Ready once at least one output is done."}
          </p>
        )}
      </div>
    </Panel>
  );
}
