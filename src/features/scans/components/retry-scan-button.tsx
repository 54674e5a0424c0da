import { Button } from "../../../components/button";
import { useRetryScan } from "../api/retry-scan";

/** Queues a failed scan again. Shown to operators and admins only (the caller decides). */
export function RetryScanButton({
  scanId,
  name,
  onRetried,
  size = "sm",
}: {
  scanId: string;
  name: string;
  onRetried?: () => void;
  size?: "sm" | "md";
}) {
  const retry = useRetryScan({ onSuccess: () => onRetried?.() });
  return (
    <Button
      size={size}
      onClick={() => retry.mutate(scanId)}
      busy={retry.isPending}
      aria-label={`Retry ${name}`}
    >
      Retry
    </Button>
  );
}
