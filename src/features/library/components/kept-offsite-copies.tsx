import { useEffect, useRef, useState, type MouseEvent } from "react";
import { Link } from "react-router-dom";
import { API, apiPath } from "../../../../shared/api";
import type { KeptCopy } from "../../../../shared/schemas/offsite";
import { formatBytes } from "../../../../shared/units";
import { Ago } from "../../../components/ago";
import { Button, Spinner } from "../../../components/button";
import { ConfirmDialog } from "../../../components/confirm-dialog";
import { FragmentName } from "../../../components/fragment-name";
import { LoadError } from "../../../components/notice";
import { Panel } from "../../../components/panel";
import { ThumbImage } from "../../../components/thumb-image";
import { paths } from "../../../config/paths";
import { ApiError } from "../../../lib/api-client";
import { checkedDownload, isPlainClick } from "../../../lib/checked-download";
import { formatDateTime } from "../../../lib/time";
import { toast } from "../../../lib/toast";
import { keptCopyDownloadUrl, useKeptOffsite, useRemoveKeptCopy } from "../api/kept-offsite";

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/** How a kept copy's piece is named in sentences: its title, or its scan and position. */
function pieceWords(c: KeptCopy): string {
  if (!c.piece) return "a piece no longer in the database";
  return c.piece.title?.trim() || `${c.piece.scanName.replace(/\.[^.]+$/, "")} · ${c.piece.position}`;
}

/** What became of the piece since, in a few words beside its name. */
function pieceState(c: KeptCopy): string {
  if (!c.piece) return "Its piece is gone too";
  if (c.piece.status === "approved") return "Approved again since, with a newer master";
  if (c.piece.status === "rejected") return "Its piece is rejected, without files";
  return "Its piece waits for review";
}

/**
 * The masters' copies the off-site bucket still holds after their pieces' files were deleted
 * (kept, as the delete does unless asked): nothing else names them. Each can be downloaded, to
 * get a master back, or removed for good after a confirmation. Hidden when off-site copy is off.
 */
export function KeptOffsiteCopies({ target }: { target: string }) {
  const kept = useKeptOffsite();
  const remove = useRemoveKeptCopy();
  const [asking, setAsking] = useState<KeptCopy | null>(null);
  const [starting, setStarting] = useState<string | null>(null);
  const bodyRef = useRef<HTMLDivElement>(null);
  // Where the removed copy's row was: once the dialog has closed (a modal keeps focus inside it),
  // focus goes to the row that took its place, or to the section when none is left.
  const refocusAt = useRef<number | null>(null);
  useEffect(() => {
    if (asking || refocusAt.current === null) return;
    const buttons = bodyRef.current?.querySelectorAll<HTMLButtonElement>("button[data-remove-kept]") ?? [];
    const next = buttons.length > 0 ? buttons[Math.min(refocusAt.current, buttons.length - 1)] : null;
    (next ?? bodyRef.current)?.focus();
    refocusAt.current = null;
  }, [asking, kept.data]);
  // "s3://bucket/prefix at http://endpoint": the bucket is what a person looks for.
  const bucket = target.replace(/ at .*$/, "");
  // A copy removed a moment ago (by another admin, or in another tab) says so, and the list is read
  // again, instead of ending as a download the browser marks failed.
  const download = (event: MouseEvent<HTMLAnchorElement>, copy: KeptCopy) => {
    if (!isPlainClick(event)) return;
    event.preventDefault();
    setStarting(copy.key);
    checkedDownload(keptCopyDownloadUrl(copy.key), copy.fileName)
      .catch((err: unknown) => {
        if (err instanceof ApiError && err.status === 404) {
          toast.error(`The kept copy of ${pieceWords(copy)} is no longer in the off-site bucket: it was removed a moment ago.`);
        } else toast.error(err instanceof Error ? err.message : String(err));
        if (err instanceof ApiError && (err.status === 404 || err.status === 409)) void kept.refetch();
      })
      .finally(() => setStarting(null));
  };
  const confirm = () => {
    if (!asking) return;
    const copy = asking;
    remove.mutate(copy.key, {
      onSuccess: (r) => {
        refocusAt.current = Math.max(0, kept.data?.copies.findIndex((c) => c.key === copy.key) ?? 0);
        setAsking(null);
        toast.success(`Removed the kept off-site copy of ${pieceWords(copy)} (${formatBytes(r.sizeBytes)}).`);
      },
      onError: () => setAsking(null),
    });
  };
  return (
    <Panel title="Kept off-site copies" titleId="kept-offsite-title">
      <div ref={bodyRef} tabIndex={-1} className="outline-none">
        {kept.isPending ? (
          <p className="flex items-center gap-2 text-sm text-ink-muted">
            <Spinner /> Looking through the off-site bucket…
          </p>
        ) : kept.isError ? (
          <LoadError error={kept.error} onRetry={() => void kept.refetch()} />
        ) : !kept.data.enabled ? (
          <p className="text-sm text-ink-muted">{kept.data.note}</p>
        ) : kept.data.copies.length === 0 ? (
          <p className="text-sm text-ink-muted" data-testid="kept-offsite-empty">
            No master&apos;s copy is kept off-site without its master. When a piece&apos;s files are deleted and its off-site copy is kept,
            the copy is listed here, to download or to remove.
          </p>
        ) : (
          <div className="flex flex-col gap-3 text-sm">
            <p className="text-ink" data-testid="kept-offsite-summary">
              {plural(kept.data.copies.length, "copy is", "copies are")} kept in the off-site bucket without{" "}
              {kept.data.copies.length === 1 ? "its master" : "their masters"} in the library:{" "}
              <span className="figure">{formatBytes(kept.data.totalBytes)}</span> in all.
            </p>
            <p className="text-ink-muted">
              Their pieces&apos; files were deleted with the off-site copy kept. Download one to get its master back; the studio pays for
              each until it is removed.
            </p>
            <ul className="flex flex-col divide-y divide-paper-200" aria-label="Kept off-site copies, newest first">
              {kept.data.copies.map((c) => (
                <li key={c.key} className="flex flex-wrap items-center gap-x-3 gap-y-2 py-2.5" data-kept-key={c.key}>
                  {c.piece ? (
                    <ThumbImage
                      src={`${apiPath(API.fragmentsThumb, { id: c.piece.id })}?r=${c.piece.revision}`}
                      className="size-12 shrink-0 rounded-sm bg-paper-200 object-cover"
                      fallback={<span className="size-12 shrink-0 rounded-sm bg-paper-200" aria-hidden="true" />}
                    />
                  ) : (
                    <span className="size-12 shrink-0 rounded-sm border border-dashed border-paper-300" aria-hidden="true" />
                  )}
                  <div className="min-w-[14rem] flex-1">
                    {c.piece ? (
                      <Link
                        to={paths.fragment(c.piece.id)}
                        className="block min-w-0 font-medium text-accent underline-offset-2 hover:underline"
                      >
                        <FragmentName fragment={c.piece} />
                      </Link>
                    ) : (
                      <span className="block font-medium text-ink">A piece no longer in the database</span>
                    )}
                    <p className="figure text-xs text-ink-soft">
                      {formatBytes(c.sizeBytes)} · copied <Ago iso={c.modifiedAt} /> ({formatDateTime(c.modifiedAt)})
                    </p>
                    <p className="text-xs text-ink-muted">{pieceState(c)}</p>
                  </div>
                  <div className="ml-auto flex shrink-0 items-center gap-3">
                    <a
                      href={keptCopyDownloadUrl(c.key)}
                      download={c.fileName}
                      className="shrink-0 text-sm font-medium text-accent underline underline-offset-2 hover:text-accent-strong"
                      aria-label={`Download the kept copy of ${pieceWords(c)} (${c.fileName})`}
                      aria-busy={starting === c.key}
                      onClick={(event) => download(event, c)}
                    >
                      {starting === c.key ? "Starting…" : "Download"}
                    </a>
                    <Button
                      size="sm"
                      variant="secondary"
                      className="shrink-0"
                      aria-label={`Remove the kept copy of ${pieceWords(c)} for good…`}
                      data-remove-kept
                      onClick={() => setAsking(c)}
                    >
                      Remove for good…
                    </Button>
                  </div>
                </li>
              ))}
            </ul>
          </div>
        )}
        {kept.data && kept.data.otherInstallations > 0 && (
          <p className="mt-3 text-xs text-ink-muted" data-testid="kept-offsite-others">
            {plural(kept.data.otherInstallations, "more copy", "more copies")} in this bucket{" "}
            {kept.data.otherInstallations === 1 ? "was" : "were"} put there by another Platen installation that shares it: not listed here,
            and never removed from here.
          </p>
        )}
      </div>
      <ConfirmDialog
        open={asking !== null}
        title="Remove this off-site copy for good?"
        confirmLabel="Remove it for good"
        busy={remove.isPending}
        onConfirm={confirm}
        onCancel={() => setAsking(null)}
      >
        {asking && (
          <>
            <p>
              The copy of the master of <span className="font-medium text-ink">{pieceWords(asking)}</span> (
              <span className="figure">{formatBytes(asking.sizeBytes)}</span>, copied {formatDateTime(asking.modifiedAt)}) is removed from
              the bucket <span className="figure break-all">{bucket}</span>.
            </p>
            <p className="mt-2">
              The library no longer holds this master, so once removed it cannot be brought back. Download it first if it may be wanted
              again.
            </p>
          </>
        )}
      </ConfirmDialog>
    </Panel>
  );
}
