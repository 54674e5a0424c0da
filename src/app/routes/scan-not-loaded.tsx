import type { UseQueryResult } from "@tanstack/react-query";
import type { Scan } from "../../../shared/schemas/scans";
import { Spinner } from "../../components/button";
import { paths } from "../../config/paths";
import { RecordNotLoaded } from "./not-found";

/**
 * What a scan's pages show until the scan is loaded: a spinner, a 404 page for an address that
 * names no scan (a malformed id answers 400), or the load error with a retry.
 */
export function ScanNotLoaded({ scan }: { scan: Extract<UseQueryResult<Scan>, { isSuccess: false }> }) {
  if (scan.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the scan…
      </p>
    );
  }
  return (
    <RecordNotLoaded
      error={scan.error}
      onRetry={() => void scan.refetch()}
      title="No scan with this address"
      back={{ to: paths.scans, label: "Back to the scans" }}
    />
  );
}
