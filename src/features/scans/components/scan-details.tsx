import type { ReactNode } from "react";
import { Link } from "react-router-dom";
import type { Scan } from "../../../../shared/schemas/scans";
import { formatBytes, formatMegapixels } from "../../../../shared/units";
import { Ago } from "../../../components/ago";
import { CopyButton } from "../../../components/copy-button";
import { ProgressBar } from "../../../components/progress-bar";
import { StatusBadge } from "../../../components/status-badge";
import { paths } from "../../../config/paths";
import { formatDateTime, formatDateTimeLong } from "../../../lib/time";
import { LOW_DPI_HINT, ORIGIN_LABELS, colourSpaceLabel, formatPhysical, formatPixels, isLowDpi, physicalOf } from "../format";
import { DpiValue } from "./dpi-value";
import { SetResolution } from "./set-resolution";
import { RestoreResolution } from "./restore-resolution";
import { useHasRole } from "../../../lib/authorization";

function Row({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div className="grid grid-cols-[8.5rem_1fr] gap-4 border-b border-paper-200 py-2.5 last:border-b-0">
      <dt className="text-sm text-ink-muted">{term}</dt>
      <dd className="min-w-0 text-sm text-ink">{children}</dd>
    </div>
  );
}

function Unknown({ children = "Not known yet" }: { children?: ReactNode }) {
  return <span className="text-ink-muted">{children}</span>;
}

function yesNo(value: boolean | null, unknown: ReactNode): ReactNode {
  if (value === null) return unknown;
  return value ? "Yes" : "No";
}

function DateValue({ iso, missing = "Not yet" }: { iso: string | null; missing?: string }) {
  if (!iso) return <Unknown>{missing}</Unknown>;
  return (
    <>
      <span title={formatDateTimeLong(iso)}>{formatDateTime(iso)}</span>{" "}
      <span className="text-ink-muted whitespace-nowrap">
        (<Ago iso={iso} />)
      </span>
    </>
  );
}

const SOURCE_LABELS: Record<Scan["source"], string> = {
  inbox: "Inbox folder",
  upload: "Uploaded in the browser",
  library: "Filed again from the library's originals",
};

/** Every recorded fact about a scan, grouped as file, image, resolution and processing. */
export function ScanDetails({ scan }: { scan: Scan }) {
  const isOperator = useHasRole("operator");
  const physical = physicalOf(scan);
  const phys = physical ? formatPhysical(physical) : null;
  const pixels = formatPixels(scan);
  const unknown = (
    <Unknown>{scan.status === "duplicate" ? "Not read for a duplicate" : scan.status === "failed" ? "Not read" : "Not known yet"}</Unknown>
  );
  return (
    <div className="flex flex-col gap-6">
      <Group title="File">
        <Row term="File name">
          <span className="[overflow-wrap:anywhere]">{scan.originalName}</span>
        </Row>
        <Row term="Intake">
          <Link to={`${paths.scans}?intake=${encodeURIComponent(scan.intake.id)}`} className="hover:text-accent hover:underline">
            {scan.intake.name}
          </Link>
        </Row>
        <Row term="Source">{SOURCE_LABELS[scan.source]}</Row>
        {scan.inInbox && (
          <Row term="Still in the inbox">
            <span className="flex flex-col gap-1" data-testid="in-inbox">
              <code className="figure text-xs [overflow-wrap:anywhere]">{scan.inInbox.path}</code>
              <span className="text-ink-soft">
                {scan.inInbox.reason === "unfinished"
                  ? "It still looked unfinished when it was filed, so it was left there: if its writer finishes it, the whole file is taken in as a new scan of the same name."
                  : "It could not be removed from the inbox (a read-only folder?). Its copy here is complete; remove the inbox file by hand when you are done with it."}
              </span>
            </span>
          </Row>
        )}
        <Row term="SHA-256">
          <span className="flex items-start gap-2">
            <code className="figure min-w-0 flex-1 text-xs leading-5 break-all select-all" aria-label="SHA-256 checksum">
              {scan.sha256}
            </code>
            <CopyButton value={scan.sha256} label="Copy SHA-256" />
          </span>
        </Row>
        <Row term="File size">
          <span className="figure">{formatBytes(scan.sizeBytes)}</span>{" "}
          <span className="figure text-xs text-ink-muted">({scan.sizeBytes.toLocaleString()} bytes)</span>
        </Row>
      </Group>

      <Group title="Image">
        <Row term="Pixel size">
          {pixels ? (
            <>
              <span className="figure">{pixels}</span>{" "}
              <span className="figure text-xs text-ink-muted">({formatMegapixels(scan.width! * scan.height!)})</span>
            </>
          ) : (
            unknown
          )}
        </Row>
        <Row term="Format">{scan.format ? scan.format.toUpperCase() : unknown}</Row>
        <Row term="Bit depth">{scan.bitDepth != null ? <span className="figure">{scan.bitDepth} bits per channel</span> : unknown}</Row>
        <Row term="Channels">{scan.channels != null ? <span className="figure">{scan.channels}</span> : unknown}</Row>
        <Row term="Colour space">{scan.colourSpace ? colourSpaceLabel(scan.colourSpace) : unknown}</Row>
        <Row term="ICC profile">
          {scan.hasIccProfile === null ? (
            unknown
          ) : scan.hasIccProfile ? (
            <>
              Embedded
              {scan.iccDescription && <span className="text-ink-soft">: {scan.iccDescription}</span>}
            </>
          ) : (
            "None embedded"
          )}
        </Row>
        <Row term="Alpha channel">{yesNo(scan.hasAlpha, unknown)}</Row>
      </Group>

      <Group title="Resolution">
        <Row term="DPI">
          {scan.dpi ? <DpiValue dpi={scan.dpi} axes /> : unknown}
          {isOperator && <SetResolution scan={scan} />}
        </Row>
        <Row term="Resolution source">
          {scan.dpi ? (
            scan.dpi.source === "assumed" ? (
              <>Assumed: the file has no resolution, so the studio default was used</>
            ) : scan.dpi.source === "set" ? (
              <>
                Set by an operator
                <RestoreResolution scan={scan} canChange={isOperator} />
              </>
            ) : (
              <>
                Embedded in the file
                {scan.dpi.origin && <>, read from the {ORIGIN_LABELS[scan.dpi.origin]}</>}
                {isLowDpi(scan.dpi) && <span className="mt-1 block text-ochre">{LOW_DPI_HINT}</span>}
              </>
            )
          ) : (
            unknown
          )}
        </Row>
        <Row term="Physical size">
          {phys ? (
            <span className="figure flex flex-col">
              <span>{phys.inches}</span>
              <span className="text-ink-soft">{phys.cm}</span>
            </span>
          ) : (
            unknown
          )}
        </Row>
      </Group>

      <Group title="Processing">
        <Row term="Status">
          <span className="flex flex-col gap-2">
            <span>
              <StatusBadge status={scan.status} />
              {scan.stage && scan.status === "analysing" && <span className="ml-2 text-ink-soft">{scan.stage}</span>}
            </span>
            {scan.status === "analysing" && (
              <ProgressBar value={scan.progress} label={`Progress for ${scan.originalName}`} className="max-w-xs" />
            )}
            {scan.error && <span className="text-brick">{scan.error}</span>}
            {scan.continuedBy && (
              <span data-testid="continued-by">
                {scan.continuedBy.how === "whole"
                  ? "Its writer finished the file afterwards; it was taken in again, whole, as "
                  : "Its writer went on with the file afterwards; it was taken in again as "}
                <Link to={paths.scan(scan.continuedBy.id)} className="font-medium text-accent underline underline-offset-2">
                  a new scan of {scan.continuedBy.originalName}
                </Link>
                .
              </span>
            )}
            {scan.duplicateOf && (
              <span>
                Same file as{" "}
                <Link to={paths.scan(scan.duplicateOf.id)} className="font-medium text-accent underline underline-offset-2">
                  {scan.duplicateOf.originalName}
                </Link>
              </span>
            )}
          </span>
        </Row>
        <Row term="Attempts">
          <span className="figure">{scan.attempts}</span>
        </Row>
        <Row term="Added">
          <DateValue iso={scan.createdAt} />
        </Row>
        <Row term="Analysed">
          {/* A failed scan is not waiting for its analysis: it stopped, and Retry starts it again. */}
          <DateValue iso={scan.analysedAt} missing={scan.status === "failed" ? "Not finished: it failed" : "Not yet"} />
        </Row>
        <Row term="Last change">
          <DateValue iso={scan.updatedAt} />
        </Row>
      </Group>
    </div>
  );
}

function Group({ title, children }: { title: string; children: ReactNode }) {
  const id = `scan-${title.toLowerCase()}`;
  return (
    <section aria-labelledby={id}>
      <h2 id={id} className="mb-1 text-xs font-semibold tracking-wider text-ink-muted uppercase">
        {title}
      </h2>
      <dl>{children}</dl>
    </section>
  );
}
