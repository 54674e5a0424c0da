import { useEffect, useRef, useState } from "react";
import type { MastersRights } from "../../../../shared/schemas/studio";
import { Button, Spinner } from "../../../components/button";
import { LoadError, Notice } from "../../../components/notice";
import { Panel } from "../../../components/panel";
import { ProgressBar } from "../../../components/progress-bar";
import { serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useMastersRights, useWriteMastersRights } from "../api/studio-settings";

const masters = (n: number) => `${n.toLocaleString("en")} ${n === 1 ? "master" : "masters"}`;

/**
 * Masters already made keep the creator and copyright they were made with. This says how many
 * carry other ones than the studio's now and, on an admin's word, has them written in (metadata
 * only), showing the rewrite's progress. `unsaved`: the form above holds edits not saved yet.
 */
export function MastersRightsPanel({ unsaved }: { unsaved: boolean }) {
  const status = useMastersRights();
  const write = useWriteMastersRights();
  const [asking, setAsking] = useState(false);
  const [error, setError] = useState<string | null>(null);
  // How many this screen queued last, for the bar.
  const [queued, setQueued] = useState<number | null>(null);
  const opener = useRef<HTMLButtonElement>(null);
  const confirmer = useRef<HTMLButtonElement>(null);
  const s = status.data;

  useEffect(() => {
    if (asking) confirmer.current?.focus();
  }, [asking]);
  // A rewrite seen running that has now finished says so once.
  const wasWriting = useRef(false);
  useEffect(() => {
    if (!s) return;
    if (wasWriting.current && s.writing === 0) {
      if (s.behind === 0) toast.success("Every master now carries the studio's creator and copyright line.");
      else if (s.failed > 0) toast.error(`${masters(s.failed)} could not be written; see why under “Rights in masters already made”.`);
      else
        toast.info(
          `Written. ${masters(s.behind)} still ${s.behind === 1 ? "carries" : "carry"} other rights; see “Rights in masters already made”.`,
        );
    }
    wasWriting.current = s.writing > 0;
  }, [s]);

  const close = () => {
    setAsking(false);
    setError(null);
    requestAnimationFrame(() => opener.current?.focus());
  };
  const run = (rights: MastersRights) =>
    write.mutate(
      { creator: rights.creator, copyright: rights.copyright },
      {
        onSuccess: ({ queued: n }) => {
          // Said when it is over, even when it was over before this screen saw it running.
          wasWriting.current = true;
          setAsking(false);
          setError(null);
          setQueued(n);
        },
        onError: (err) => setError(serverErrorFor(err, []).message),
      },
    );

  return (
    <Panel title="Rights in masters already made" titleId="masters-rights-title" className="max-w-5xl">
      {status.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Counting the masters…
        </p>
      ) : status.isError ? (
        <LoadError error={status.error} onRetry={() => void status.refetch()} />
      ) : (
        <div className="flex flex-col gap-3 text-sm" data-testid="masters-rights">
          {s!.writing > 0 ? (
            <div className="flex flex-col gap-2" role="status">
              <p className="flex items-center gap-2 text-ink">
                <Spinner /> Writing the studio's rights into {masters(s!.writing)}
                {queued && queued >= s!.writing
                  ? ` (${(queued - s!.writing).toLocaleString("en")} of ${queued.toLocaleString("en")} done)`
                  : " now"}
                …
              </p>
              {queued && queued >= s!.writing ? (
                <ProgressBar value={((queued - s!.writing) / queued) * 100} label="Rights written" className="max-w-md" />
              ) : null}
            </div>
          ) : s!.masters === 0 ? (
            <p className="text-ink-soft">No masters are made yet. Each one carries the rights above from the moment it is made.</p>
          ) : s!.behind === 0 ? (
            <p className="text-ink-soft">
              <span aria-hidden className="mr-1.5 text-accent">
                ✓
              </span>
              {s!.creator || s!.copyright
                ? `All ${masters(s!.masters)} carry the studio's creator and copyright line.`
                : `All ${masters(s!.masters)} agree with the studio: it names no creator or copyright line yet, so none is written. Fill them in above and they can be written in.`}
            </p>
          ) : (
            <>
              <p className="text-ink">
                <span className="figure font-semibold">{s!.behind.toLocaleString("en")}</span> of {masters(s!.masters)}{" "}
                {s!.behind === 1 ? "carries" : "carry"} another creator or copyright line than the studio's.
                {s!.unknown > 0 && (
                  <span className="text-ink-soft">
                    {" "}
                    ({s!.unknown.toLocaleString("en")} {s!.unknown === 1 ? "was" : "were"} made before Platen kept track; any that already
                    agree are left as they are.)
                  </span>
                )}
              </p>
              {s!.failed > 0 && (
                <Notice tone="caution" title={`${masters(s!.failed)} could not be written the last time`}>
                  <ul className="list-disc pl-4" aria-label="Why">
                    {s!.reasons.map((r) => (
                      <li key={r}>{r}</li>
                    ))}
                  </ul>
                  Writing again tries them once more.
                </Notice>
              )}
              <p className="text-xs text-ink-muted">The studio's now, to be written in:</p>
              <dl className="-mt-2 grid max-w-xl grid-cols-[max-content_1fr] gap-x-4 gap-y-1 text-sm">
                <dt className="text-ink-muted">Creator</dt>
                <dd className="text-ink">{s!.creator ?? <span className="text-ink-muted">none (taken out)</span>}</dd>
                <dt className="text-ink-muted">Copyright line</dt>
                <dd className="text-ink">{s!.copyright ?? <span className="text-ink-muted">none (taken out)</span>}</dd>
              </dl>
              {!asking ? (
                <div className="flex flex-wrap items-center gap-3">
                  <Button ref={opener} type="button" size="sm" disabled={unsaved} onClick={() => setAsking(true)}>
                    Write them into {masters(s!.behind)}…
                  </Button>
                  {unsaved && <span className="text-xs text-ink-muted">Save the settings above first.</span>}
                </div>
              ) : (
                <div
                  role="group"
                  aria-label="Write the studio's rights"
                  className="flex flex-col gap-3 rounded-lg border border-paper-300 bg-white px-4 py-3"
                  onKeyDown={(e) => e.key === "Escape" && close()}
                >
                  <p className="text-ink-soft">
                    Each master and its web copy get the creator and copyright line above, with the piece's own title. Only those fields are
                    written again: pixels, colour profile, bit depth and resolution stay exactly as they are. A master with an off-site copy
                    is copied there again. Batch copies are not touched; run their batch again to remake them.
                  </p>
                  {error && (
                    <p role="alert" className="text-brick">
                      {error}
                    </p>
                  )}
                  <div className="flex gap-2">
                    <Button ref={confirmer} type="button" size="sm" variant="primary" busy={write.isPending} onClick={() => run(s!)}>
                      Write into {masters(s!.behind)}
                    </Button>
                    <Button type="button" size="sm" variant="quiet" onClick={close}>
                      Not now
                    </Button>
                  </div>
                </div>
              )}
            </>
          )}
        </div>
      )}
    </Panel>
  );
}
