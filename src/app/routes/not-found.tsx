import { Link } from "react-router-dom";
import { paths } from "../../config/paths";
import { ApiError } from "../../lib/api-client";
import { LoadError } from "../../components/notice";

/**
 * Whether a failed load means the address names nothing: the record is gone (404) or the id in it
 * is malformed (400). Trying again cannot help, so the page says so instead of offering a retry.
 */
export function isMissing(error: unknown): boolean {
  return error instanceof ApiError && (error.status === 404 || error.status === 400);
}

export function NotFoundRoute({
  title = "No page at this address",
  message = "The link may be old, or the address mistyped.",
  back = { to: paths.queue, label: "Go to the queue" },
}: {
  title?: string;
  message?: string;
  back?: { to: string; label: string };
}) {
  return (
    <div className="mx-auto max-w-md py-24 text-center">
      <title>Not found · Platen</title>
      <p className="figure text-5xl font-medium text-ink-faint">404</p>
      <h1 className="mt-4 text-xl font-semibold text-ink">{title}</h1>
      <p className="mt-2 text-sm text-ink-soft">{message}</p>
      <Link to={back.to} className="mt-6 inline-block text-sm font-medium text-accent underline underline-offset-2">
        {back.label}
      </Link>
    </div>
  );
}

/**
 * A record's page that could not load it: the not-found page when the address names nothing
 * (`isMissing`), otherwise the error with a retry.
 */
export function RecordNotLoaded({
  error,
  onRetry,
  title,
  back,
}: {
  error: Error;
  onRetry: () => void;
  /** "No recipe at this address" */
  title: string;
  back: { to: string; label: string };
}) {
  if (isMissing(error))
    return <NotFoundRoute title={title} message="It may never have existed, or the link was copied incompletely." back={back} />;
  return <LoadError error={error} onRetry={onRetry} />;
}
