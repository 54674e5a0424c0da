import { useRef, useState } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { formatBytes } from "../../../../shared/units";
import { Button, Spinner } from "../../../components/button";
import { useHasRole } from "../../../lib/authorization";
import { serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useDeleteFragmentFiles, useFragmentFilesPlan } from "../api/fragment-files";
import { fragmentName } from "../format";

const TITLE = "Delete its master and copies";

/**
 * Admins only: deletes the piece's master, its web copy and every batch copy made from it, after
 * saying exactly what goes (the server refuses to remove more files than were shown). The original
 * scan stays, so approving the piece again renders a new master. Keep is the default answer.
 */
export function DeleteFragmentFiles({
  fragment,
}: {
  fragment: Pick<Fragment, "id" | "title" | "position" | "scanName" | "status" | "outputs">;
}) {
  const isAdmin = useHasRole("admin");
  const [asking, setAsking] = useState(false);
  const [error, setError] = useState<string | null>(null);
  // The off-site copy is the studio's backup: kept unless the admin ticks this.
  const [dropOffsite, setDropOffsite] = useState(false);
  const plan = useFragmentFilesPlan(fragment.id, isAdmin && asking);
  const remove = useDeleteFragmentFiles(fragment.id);
  const opener = useRef<HTMLButtonElement>(null);
  if (!isAdmin || (fragment.outputs.length === 0 && !asking)) return null;

  const close = () => {
    setAsking(false);
    setError(null);
    setDropOffsite(false);
    requestAnimationFrame(() => opener.current?.focus());
  };
  const run = (upTo: number, offsite: "keep" | "delete") =>
    remove.mutate(
      { upTo, offsite },
      {
        onSuccess: ({ removed, notRemoved, offsite: there, offsiteError }) => {
          setAsking(false);
          setError(null);
          setDropOffsite(false);
          toast.success(
            `Deleted ${removed} ${removed === 1 ? "file" : "files"} of ${fragmentName(fragment)}` +
              (there === "removed" ? ", and its off-site copy." : there === "kept" ? "; its off-site copy is kept." : ".") +
              (notRemoved ? ` ${notRemoved} could not be removed now; the next tidy removes them.` : ""),
          );
          if (offsiteError) toast.error(offsiteError);
        },
        onError: (err) => {
          setError(serverErrorFor(err, [] as const).message);
          void plan.refetch();
        },
      },
    );

  if (!asking) {
    return (
      <div className="mt-3">
        <Button ref={opener} size="sm" variant="quiet" className="-ml-3 text-brick" onClick={() => setAsking(true)}>
          {TITLE}…
        </Button>
      </div>
    );
  }

  const p = plan.data;
  return (
    <div
      role="group"
      aria-label={TITLE}
      className="mt-3 flex flex-col gap-2 rounded-md border border-brick/40 bg-brick-soft/40 p-3 text-sm"
      onKeyDown={(e) => {
        if (e.key === "Escape") {
          e.preventDefault();
          close();
        }
      }}
    >
      {plan.isPending ? (
        <p className="flex items-center gap-2 text-ink-soft">
          <Spinner /> Counting its files…
        </p>
      ) : plan.isError ? (
        <p role="alert" className="text-brick">
          {serverErrorFor(plan.error, [] as const).message}
        </p>
      ) : p!.blocked ? (
        <p className="text-ink">{p!.blocked}</p>
      ) : (
        <>
          <p className="text-ink">
            Deletes for good{" "}
            {p!.master ? (
              <>
                the master ({p!.master.format.toUpperCase()}, <span className="figure">{formatBytes(p!.master.bytes)}</span>)
                {p!.copies > 0 && (
                  <>
                    {" "}
                    and {p!.copies} {p!.copies === 1 ? "copy" : "copies"}
                  </>
                )}
              </>
            ) : (
              <>
                {p!.copies} {p!.copies === 1 ? "copy" : "copies"}
              </>
            )}
            : <span className="figure">{p!.files}</span> {p!.files === 1 ? "file" : "files"},{" "}
            <span className="figure">{formatBytes(p!.bytes)}</span> in all.
            {fragment.status === "approved" && " The piece leaves the approved work."}
            {p!.batches > 0 &&
              ` ${p!.batches === 1 ? "A batch keeps its item" : `${p!.batches} batches keep their items`}, without the file.`}
          </p>
          <p className="text-ink-soft">
            The original scan stays: approving the piece again renders a new master from it.
            {!p!.offsite && " No off-site copy of its master is on record."}
          </p>
          {p!.offsite && (
            <label className="flex cursor-pointer items-start gap-2.5 text-ink">
              <input
                type="checkbox"
                className="mt-0.5 size-4 accent-brick"
                checked={dropOffsite}
                disabled={p!.offsite.status === "pending"}
                onChange={(e) => setDropOffsite(e.target.checked)}
              />
              <span>
                Also delete its master's copy in the off-site bucket
                <span className="block text-xs text-ink-muted">
                  {p!.offsite.status === "pending"
                    ? "It is being copied there right now: it can go once the copy is done."
                    : "Left unticked, the bucket keeps it as the studio's backup of this piece."}
                </span>
              </span>
            </label>
          )}
        </>
      )}
      {error && (
        <p role="alert" className="text-brick">
          {error}
        </p>
      )}
      <div className="flex flex-wrap gap-2">
        {p && !p.blocked && p.files > 0 && (
          <Button
            size="sm"
            variant="danger"
            busy={remove.isPending}
            onClick={() => run(p.files, dropOffsite && p.offsite ? "delete" : "keep")}
          >
            Delete {p.files} {p.files === 1 ? "file" : "files"}
            {dropOffsite && p.offsite ? " and the off-site copy" : ""}
          </Button>
        )}
        <Button size="sm" variant="quiet" autoFocus onClick={close} disabled={remove.isPending}>
          {p && !p.blocked ? "Keep them" : "Close"}
        </Button>
      </div>
    </div>
  );
}
