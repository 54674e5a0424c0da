import { Link } from "react-router-dom";
import { paths } from "../../../config/paths";
import type { BatchReport } from "../api/get-batch-report";
import { plural } from "../format";

const linkClass = "font-medium text-accent underline underline-offset-2";

/** For a re-run: which batch it runs again, and what becomes (or became) of that batch's outputs. */
function RerunOfLine({ report }: { report: BatchReport }) {
  const { batch, replaceOutcome, oldReplaced } = report;
  if (!batch.rerunOf) return null;
  let outcome: string;
  if (!batch.replaceOld) outcome = "Its outputs stay beside these.";
  else if (replaceOutcome === "waiting") outcome = "Once every output here is made, these replace its outputs.";
  else if (replaceOutcome === "kept")
    outcome = `Not every output here was made, so its outputs were kept${batch.counts.failed > 0 ? "; retrying the failed ones replaces them once all are made" : ""}.`;
  else if (oldReplaced) outcome = `Every output here was made, so these replaced ${oldReplaced} of its outputs.`;
  else outcome = "Every output here was made; none of its outputs needed replacing (the same files are in use here or in another batch).";
  return (
    <span className="block" data-testid="rerun-of">
      A re-run of{" "}
      <Link to={paths.batch(batch.rerunOf.id)} className={linkClass}>
        {batch.rerunOf.name}
      </Link>
      . {outcome}
    </span>
  );
}

/** For a batch run again later: each later run, and whether it replaced these outputs. */
function LaterRunLines({ report, replacedHere }: { report: BatchReport; replacedHere: number }) {
  const runs = report.laterRuns.slice(-3);
  if (!runs.length) return null;
  return (
    <span className="block" data-testid="later-runs">
      {runs.map((r) => {
        let what: string;
        if (!r.replaceOld) what = ", keeping these outputs.";
        else if (r.replaceOutcome === "waiting") what = ", which replaces these outputs once it is complete.";
        else if (r.replaceOutcome === "kept") what = ", which kept these outputs: not all of its own were made.";
        else if (replacedHere > 0) what = ", which replaced the outputs marked Replaced below.";
        else what = "; nothing here needed replacing.";
        return (
          <span key={r.id} className="block" data-later-run={r.id}>
            Run again as{" "}
            <Link to={paths.batch(r.id)} className={linkClass}>
              {r.name}
            </Link>
            {what}
          </span>
        );
      })}
      {report.laterRuns.length > runs.length && (
        <span className="block">…and {plural(report.laterRuns.length - runs.length, "earlier re-run")}.</span>
      )}
    </span>
  );
}

/** The lines under a batch's title that tie it to the batch it re-runs and to later re-runs of it. */
export function RerunNote({ report, replacedHere }: { report: BatchReport; replacedHere: number }) {
  if (!report.batch.rerunOf && !report.laterRuns.length) return null;
  return (
    <span className="mb-1 block">
      <RerunOfLine report={report} />
      <LaterRunLines report={report} replacedHere={replacedHere} />
    </span>
  );
}
