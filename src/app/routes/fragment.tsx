import { Link, useParams } from "react-router-dom";
import { Spinner } from "../../components/button";
import { LoadError } from "../../components/notice";
import { paths } from "../../config/paths";
import { useFragment } from "../../features/fragments/api/get-fragment";
import { FragmentFacts, FragmentPicture } from "../../features/fragments/components/fragment-sheet";
import { FragmentStatusBadge } from "../../features/fragments/components/fragment-status";
import { fragmentName } from "../../features/fragments/format";
import { ApiError } from "../../lib/api-client";
import { useHasRole } from "../../lib/authorization";
import { NotFoundRoute } from "./not-found";

export function FragmentRoute() {
  const { id = "" } = useParams();
  const fragment = useFragment(id);
  const isOperator = useHasRole("operator");

  if (fragment.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the fragment…
      </p>
    );
  }
  if (fragment.isError) {
    if (fragment.error instanceof ApiError && (fragment.error.status === 404 || fragment.error.status === 400)) {
      return (
        <NotFoundRoute
          title="No fragment at this address"
          message={
            isOperator
              ? "It may have been merged into another, or replaced by a new split."
              : "It may not be approved yet, or the link was copied incompletely."
          }
          back={{ to: paths.work, label: "Back to the approved work" }}
        />
      );
    }
    return <LoadError error={fragment.error} onRetry={() => void fragment.refetch()} />;
  }
  const f = fragment.data;
  return (
    <>
      <title>{`${fragmentName(f)} · Platen`}</title>
      <nav aria-label="Breadcrumb" className="mb-3 text-sm text-ink-muted">
        <Link to={paths.work} className="hover:text-accent hover:underline">
          Approved work
        </Link>
        {isOperator && (
          <>
            <span aria-hidden="true" className="mx-2">
              /
            </span>
            <Link to={paths.scanReview(f.scanId)} className="hover:text-accent hover:underline">
              Review {f.scanName}
            </Link>
          </>
        )}
      </nav>
      <div className="mb-6 flex flex-wrap items-center gap-4">
        <h1 className="min-w-0 text-2xl font-semibold tracking-tight [overflow-wrap:anywhere] text-ink">{fragmentName(f)}</h1>
        {isOperator && <FragmentStatusBadge status={f.status} />}
      </div>
      <div className="grid grid-cols-1 gap-8 xl:grid-cols-[minmax(0,3fr)_minmax(22rem,2fr)]">
        <div className="self-start xl:sticky xl:top-8">
          <FragmentPicture fragment={f} />
        </div>
        <div className="rounded-xl border border-paper-300 bg-paper-50 px-6 py-5 shadow-sheet">
          <FragmentFacts fragment={f} editable={isOperator} />
        </div>
      </div>
    </>
  );
}
