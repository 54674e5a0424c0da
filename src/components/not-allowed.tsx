import { Link } from "react-router-dom";
import { ROLE_LABELS, type Role } from "../../shared/roles";

/** What a page shows to someone whose role does not reach it. */
export function NotAllowed({ needed, current }: { needed: Role; current: Role }) {
  return (
    <div className="mx-auto max-w-md py-20 text-center">
      <title>Not allowed · Platen</title>
      <p className="text-xs font-semibold tracking-[0.18em] text-ink-muted uppercase">Not allowed</p>
      <h1 className="mt-3 text-2xl font-semibold text-ink">This page is for {ROLE_LABELS[needed].toLowerCase()}s</h1>
      <p className="mt-3 text-sm text-ink-soft">
        You are signed in as {ROLE_LABELS[current].toLowerCase()}. Ask an admin of the studio if you need access.
      </p>
      <Link
        to="/queue"
        className="mt-6 inline-flex h-10 items-center rounded-md border border-paper-300 bg-paper-50 px-4 text-sm font-medium hover:bg-white"
      >
        Back to the queue
      </Link>
    </div>
  );
}
