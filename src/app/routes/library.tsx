import { useState } from "react";
import { Link } from "react-router-dom";
import { paths } from "../../config/paths";
import { Ago } from "../../components/ago";
import { Button, Spinner } from "../../components/button";
import { ConfirmDialog } from "../../components/confirm-dialog";
import { NotAllowed } from "../../components/not-allowed";
import { LoadError, Notice } from "../../components/notice";
import { PageHeader, Panel } from "../../components/panel";
import { useCheckAllOffsite, useLibrary, useRefileOriginals, useTidyLibrary } from "../../features/library/api/library";
import { FolderBars } from "../../features/library/components/folder-bars";
import { KeptOffsiteCopies } from "../../features/library/components/kept-offsite-copies";
import { fragmentName } from "../../features/fragments/format";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { toast } from "../../lib/toast";
import { formatBytes } from "../../../shared/units";
import type { LibraryOverview } from "../../../shared/schemas/library";

export function LibraryRoute() {
  const me = useSessionUser();
  const isAdmin = useHasRole("admin");
  if (!isAdmin) return <NotAllowed needed="admin" current={me.role} />;
  return <LibraryPage />;
}

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

function LibraryPage() {
  const library = useLibrary();
  return (
    <>
      <title>Library · Platen</title>
      <PageHeader title="Library" description="Where the studio's files are kept, and the files nothing needs any more." />
      {library.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Looking through the library…
        </p>
      ) : library.isError ? (
        <LoadError error={library.error} onRetry={() => void library.refetch()} />
      ) : (
        <div className="grid grid-cols-1 items-start gap-6 xl:grid-cols-[minmax(0,2fr)_minmax(20rem,1fr)]">
          <div className="flex flex-col gap-6">
            <LeftOvers overview={library.data} />
            {library.data.offsite && <KeptOffsiteCopies target={library.data.offsite.target} />}
          </div>
          <div className="flex flex-col gap-6">
            <Whereabouts overview={library.data} />
            {library.data.offsite && <Offsite offsite={library.data.offsite} />}
            <RejectedKept kept={library.data.rejectedKept} />
          </div>
        </div>
      )}
    </>
  );
}

/**
 * Originals whose content no scan holds: scans are never deleted, so the database lost them
 * (restored from an older backup, or a filing cut off). They stay, and an admin can have them
 * filed again, after reading what that does (it cannot be undone: scans are never deleted).
 */
function UnknownOriginals({ count, foreign }: { count: number; foreign: boolean }) {
  const refile = useRefileOriginals();
  const [asking, setAsking] = useState(false);
  const them = count === 1 ? "it" : "them";
  return (
    <div className="rounded-lg border border-paper-300 bg-paper-50 px-3 py-2" data-testid="unknown-originals">
      <p className="text-ink">
        {plural(count, "original", "originals")} in the library {count === 1 ? "is" : "are"} not known to the database: no scan holds{" "}
        {count === 1 ? "its" : "their"} content. Originals are never removed by the program. This is what a database restored from a backup
        older than the library leaves.
      </p>
      <div className="mt-2 flex flex-wrap items-center gap-3">
        <Button size="sm" variant="secondary" busy={refile.isPending} onClick={() => setAsking(true)}>
          File {them} again as new {count === 1 ? "scan" : "scans"}…
        </Button>
        <Link to={paths.queue} className="text-sm text-accent-strong underline underline-offset-2">
          Open the queue
        </Link>
      </div>
      <ConfirmDialog
        open={asking}
        title={`File ${plural(count, "original", "originals")} again?`}
        tone="primary"
        confirmLabel={`File ${plural(count, "original", "originals")} again`}
        busy={refile.isPending}
        onCancel={() => setAsking(false)}
        onConfirm={() =>
          refile.mutate(
            { anyway: foreign },
            {
              onSuccess: (r) => {
                setAsking(false);
                toast.success(
                  r.queued === 0
                    ? `${plural(r.originals, "original is", "originals are")} already waiting to be filed again.`
                    : `Filing ${plural(r.queued, "original", "originals")} again: each appears in the queue as a new scan, to be reviewed once more.`,
                );
              },
              onError: () => setAsking(false),
            },
          )
        }
      >
        {foreign && (
          <p className="mb-2 font-medium text-ink">
            The database names none of the library's originals: it may not be this library's database. Go on only if it is the library's own
            database, restored from an older backup; otherwise this brings the whole archive into it.
          </p>
        )}
        <p>
          Each becomes a new scan in the current intake, named <span className="figure">filed-again-</span> and the start of its checksum
          (the file names were in the lost records), to be split, reviewed and approved once more. The originals stay exactly as they are.
          Scans are never deleted, so this cannot be undone.
        </p>
      </ConfirmDialog>
    </div>
  );
}

function LeftOvers({ overview }: { overview: LibraryOverview }) {
  const tidy = useTidyLibrary();
  const [asking, setAsking] = useState(false);
  const { tidy: report, lastTidy, tidyEveryHours } = overview;
  const young = report.folders.reduce((n, f) => n + f.tooYoung, 0);
  const originals = report.folders.find((f) => f.folder === "originals/");
  const masters = report.folders.find((f) => f.folder === "masters/")?.removed ?? 0;
  const run = () =>
    tidy.mutate(
      { allowLarge: report.caution !== null, upTo: report.removed },
      {
        onSuccess: (done) => {
          setAsking(false);
          toast.success(`Removed ${plural(done.removed, "left-over file", "left-over files")} (${formatBytes(done.removedBytes)}).`);
        },
        onError: () => setAsking(false),
      },
    );
  return (
    <Panel
      title="Left-over files"
      titleId="leftovers-title"
      actions={
        <Button variant="danger" size="sm" disabled={report.removed === 0} onClick={() => setAsking(true)}>
          Tidy now
        </Button>
      }
    >
      <p className="text-sm text-ink-soft">
        Files that no scan, fragment or output names any more: the small pictures of a fragment before its last edit, the master and copies
        of a merge taken back, a file a stopped process stored without its record, and the temp files and scratch folders of work a stopped
        process left unfinished.
      </p>
      {report.caution && (
        <Notice tone="caution" title="Look before tidying" className="mt-4">
          {report.caution}
        </Notice>
      )}
      <FolderBars folders={report.folders} />
      <div className="mt-4 flex flex-col gap-2 text-sm" aria-live="polite">
        <p className="text-ink" data-testid="tidy-summary">
          {report.removed > 0
            ? `A tidy now removes ${plural(report.removed, "file", "files")} (${formatBytes(report.removedBytes)}).`
            : `Nothing to tidy: every file older than ${plural(report.graceHours, "hour", "hours")} is in use.`}
        </p>
        {young > 0 && (
          <p className="text-ink-muted">
            {plural(young, "left-over file is", "left-over files are")} younger than {report.graceHours} hours and kept for now: a file is
            written a moment before the record that names it.
          </p>
        )}
        {originals && originals.leftOver > report.unknownOriginals && (
          <p className="text-ink-muted">
            {plural(originals.leftOver - report.unknownOriginals, "original", "originals")} that no scan names
            {originals.leftOver - report.unknownOriginals === 1 ? " holds" : " hold"} content a scan has under another name: spare copies,
            kept (originals are never removed by the program).
          </p>
        )}
        {report.unknownOriginals > 0 && <UnknownOriginals count={report.unknownOriginals} foreign={report.foreignDatabase} />}
        <p className="text-ink-muted">
          {lastTidy ? (
            <>
              Last tidied <Ago iso={lastTidy.at} /> by {lastTidy.by ?? "the worker"}:{" "}
              {lastTidy.removed > 0
                ? `${plural(lastTidy.removed, "file", "files")}, ${formatBytes(lastTidy.bytes)}.`
                : "nothing to remove."}{" "}
            </>
          ) : (
            "Not tidied yet. "
          )}
          {tidyEveryHours > 0
            ? `The worker tidies every ${plural(tidyEveryHours, "hour", "hours")} by itself; left-over masters wait for an admin.`
            : "The worker does not tidy by itself (PLATEN_TIDY_EVERY_HOURS is 0)."}
        </p>
      </div>
      <ConfirmDialog
        open={asking}
        title="Tidy the library?"
        confirmLabel={report.caution ? "Remove them anyway" : `Remove ${plural(report.removed, "file", "files")}`}
        busy={tidy.isPending}
        onConfirm={run}
        onCancel={() => setAsking(false)}
      >
        {report.caution && <p className="mb-2 font-medium text-ink">{report.caution}</p>}
        {plural(report.removed, "left-over file", "left-over files")} ({formatBytes(report.removedBytes)}) will be removed from the library
        {masters > 0 && (
          <>, among them {plural(masters, "master", "masters")}: the full-resolution file of a fragment that no longer exists</>
        )}
        . No scan, fragment or output uses them, and originals are never touched, but removed files cannot be brought back.
      </ConfirmDialog>
    </Panel>
  );
}

/** A path or address that may wrap after any "/" (never inside a folder's name). */
function BreakAfterSlashes({ text }: { text: string }) {
  const parts = text.split("/");
  return (
    <>
      {parts.map((part, i) => (
        <span key={i}>
          {part}
          {i < parts.length - 1 && (
            <>
              /<wbr />
            </>
          )}
        </span>
      ))}
    </>
  );
}

function Whereabouts({ overview }: { overview: LibraryOverview }) {
  return (
    <Panel title="Where the files are" titleId="where-title">
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2 text-sm">
        <dt className="text-ink-muted">Library</dt>
        <dd className="figure text-ink [overflow-wrap:anywhere]" data-testid="library-where">
          <BreakAfterSlashes
            text={overview.library.description.replace(/^the library folder /, "").replace(/^\w/, (c) => c.toUpperCase())}
          />
        </dd>
        <dt className="text-ink-muted">Kept as</dt>
        <dd className="text-ink">{overview.library.kind === "s3" ? "objects in an S3 bucket" : "files in a folder on this machine"}</dd>
        <dt className="text-ink-muted">Off-site copy</dt>
        <dd className="figure break-all text-ink">{overview.offsite ? overview.offsite.target : "off"}</dd>
      </dl>
    </Panel>
  );
}

/** Rejected pieces whose master and copies are still kept, the largest first, each a link to its page. */
function RejectedKept({ kept }: { kept: LibraryOverview["rejectedKept"] }) {
  return (
    <Panel title="Files of rejected pieces" titleId="rejected-title">
      {kept.pieces === 0 ? (
        <p className="text-sm text-ink-muted">No rejected piece keeps a master or copies.</p>
      ) : (
        <div className="flex flex-col gap-3 text-sm">
          <p className="text-ink">
            <span className="figure">{kept.pieces}</span> rejected {kept.pieces === 1 ? "piece keeps" : "pieces keep"}{" "}
            <span className="figure">{kept.files}</span> {kept.files === 1 ? "file" : "files"} (
            <span className="figure">{formatBytes(kept.bytes)}</span>), in case {kept.pieces === 1 ? "it is" : "one is"} approved again.
            Delete them from {kept.pieces === 1 ? "its" : "each piece's"} page.
          </p>
          <ul className="flex flex-col gap-1" aria-label="Largest first">
            {kept.largest.map((f) => (
              <li key={f.id} className="flex items-baseline justify-between gap-3">
                <Link to={paths.fragment(f.id)} className="min-w-0 truncate text-accent underline-offset-2 hover:underline">
                  {fragmentName(f)}
                </Link>
                <span className="figure shrink-0 text-xs text-ink-muted">{formatBytes(f.bytes)}</span>
              </li>
            ))}
          </ul>
        </div>
      )}
    </Panel>
  );
}

const OFFSITE_WORDS: Record<string, string> = { copied: "copied", pending: "waiting to be copied", failed: "failed" };

function Offsite({ offsite }: { offsite: NonNullable<LibraryOverview["offsite"]> }) {
  const checkAll = useCheckAllOffsite();
  const failed = offsite.counts.failed ?? 0;
  return (
    <Panel
      title="Off-site copies of masters"
      titleId="offsite-title"
      actions={
        <Button
          size="sm"
          busy={checkAll.isPending}
          onClick={() =>
            checkAll.mutate(undefined, {
              onSuccess: ({ queued }) => toast.info(`Re-checking ${plural(queued, "copy", "copies")} against their masters.`),
            })
          }
        >
          Re-check every copy
        </Button>
      }
    >
      <ul className="flex flex-col gap-1 text-sm">
        {["copied", "pending", "failed"].map((s) => (
          <li key={s} className="flex justify-between gap-4">
            <span className="text-ink-soft">{OFFSITE_WORDS[s]}</span>
            <span className="figure text-ink">{offsite.counts[s] ?? 0}</span>
          </li>
        ))}
      </ul>
      {failed > 0 && (
        <Notice tone="caution" className="mt-3">
          {plural(failed, "master has", "masters have")} no good off-site copy. Each fragment's page says why and can copy it again.
        </Notice>
      )}
    </Panel>
  );
}
