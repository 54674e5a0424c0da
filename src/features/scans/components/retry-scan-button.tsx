import { Button } from "../../../components/button";
import { retryCanHelp, WHAT_TO_DO_INSTEAD } from "../../../../shared/scan-failures";
import { useRetryScan } from "../api/retry-scan";

/**
 * Queues a failed scan again. Shown to operators and admins only (the caller decides). For a
 * failure that lies in the file itself (`errorCode`), asking again cannot help: it says what to
 * do instead, in place of the button.
 */
export function RetryScanButton({
  scanId,
  name,
  errorCode,
  onRetried,
  size = "sm",
}: {
  scanId: string;
  name: string;
  errorCode?: string | null;
  onRetried?: () => void;
  size?: "sm" | "md";
}) {
  const retry = useRetryScan({ onSuccess: () => onRetried?.() });
  if (!retryCanHelp(errorCode))
    return (
      <p className="max-w-xs text-xs text-ink-muted" data-testid="retry-cannot-help">
        {WHAT_TO_DO_INSTEAD}
      </p>
    );
  return (
    <Button size={size} onClick={() => retry.mutate(scanId)} busy={retry.isPending} aria-label={`Retry ${name}`}>
      Retry
    </Button>
  );
}
