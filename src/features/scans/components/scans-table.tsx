import { useEffect, useEffectEvent, useRef, useState, type KeyboardEvent as ReactKeyboardEvent } from "react";
import { Link, useNavigate } from "react-router-dom";
import type { Scan } from "../../../../shared/schemas/scans";
import { formatBytes } from "../../../../shared/units";
import { StatusBadge } from "../../../components/status-badge";
import { paths } from "../../../config/paths";
import { useHasRole } from "../../../lib/authorization";
import { cn } from "../../../lib/cn";
import { formatDateTimeLong, formatShortDateTime } from "../../../lib/time";
import { formatPhysical, formatPixels, physicalOf } from "../format";
import { DpiValue } from "./dpi-value";
import { ReviewState } from "./review-state";
import { ScanThumb } from "./scan-thumb";
import type { SortDir, SortField } from "./use-scan-filters";

interface Column {
  label: string;
  /** Fixed column width; the file name takes what is left. */
  width?: string;
  /**
   * Shown only when the list is wide enough (a container query on the list): on a narrow window
   * the file name keeps room to be read, and the pixels move under the DPI.
   */
  wideOnly?: boolean;
  sort?: SortField;
  /** The direction a first click sorts in: names A→Z, sizes and dates largest/newest first. */
  firstDir?: SortDir;
  className?: string;
}

const COLUMNS: Column[] = [
  { label: "File name", sort: "originalName", firstDir: "asc" },
  { label: "Pixels", sort: "width", firstDir: "desc", width: "w-[8rem]", wideOnly: true },
  { label: "DPI", sort: "dpi", firstDir: "desc", width: "w-[7.5rem] @5xl:w-[9.5rem]" },
  { label: "Physical size", width: "w-[8.5rem]" },
  { label: "Status", sort: "status", firstDir: "asc", width: "w-[8.5rem]" },
  {
    label: "File size",
    sort: "sizeBytes",
    firstDir: "desc",
    className: "text-right",
    width: "w-[5.5rem]",
    wideOnly: true,
  },
  {
    label: "Added",
    sort: "createdAt",
    firstDir: "desc",
    className: "text-right",
    width: "w-[7.5rem] @5xl:w-[8.5rem]",
  },
];

/** A wide-only column's cells: gone from the table's layout on a narrow list. */
const WIDE_ONLY = "hidden @5xl:table-cell";

function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  return target.isContentEditable || ["INPUT", "TEXTAREA", "SELECT"].includes(target.tagName) || target.closest("dialog[open]") !== null;
}

/**
 * The scans as a real table: sortable headers (aria-sort), one row per scan with its file name
 * as a link. j/k or the arrow keys move between rows, Enter opens the one in focus.
 */
export function ScansTable({
  scans,
  sort,
  dir,
  onSort,
  busy,
}: {
  scans: Scan[];
  sort: SortField;
  dir: SortDir;
  onSort: (sort: SortField, dir: SortDir) => void;
  busy?: boolean;
}) {
  const navigate = useNavigate();
  const canReview = useHasRole("operator");
  const [active, setActive] = useState(-1);
  const rows = useRef<Array<HTMLTableRowElement | null>>([]);
  const activeId = active >= 0 ? scans[active]?.id : undefined;

  // Keep the same scan active when the list refreshes underneath it.
  const lastActiveId = useRef<string | undefined>(undefined);
  useEffect(() => {
    if (lastActiveId.current === undefined) return;
    const index = scans.findIndex((s) => s.id === lastActiveId.current);
    setActive(index);
  }, [scans]);
  useEffect(() => {
    lastActiveId.current = activeId;
  }, [activeId]);

  const move = (delta: number) => {
    if (scans.length === 0) return;
    const next = active < 0 ? (delta > 0 ? 0 : scans.length - 1) : Math.min(scans.length - 1, Math.max(0, active + delta));
    setActive(next);
    const row = rows.current[next];
    row?.focus();
    row?.scrollIntoView({ block: "nearest" });
  };

  // j and k work anywhere on the page that is not a text field; arrows only inside the table.
  // One listener for the page's life; it always sees this render's list and selection
  // (a listener re-added after each render could miss a key pressed just after a change).
  const onKey = useEffectEvent((event: KeyboardEvent) => {
    if (event.metaKey || event.ctrlKey || event.altKey || isTyping(event.target)) return;
    if (event.key === "j") {
      event.preventDefault();
      move(1);
    } else if (event.key === "k") {
      event.preventDefault();
      move(-1);
    }
  });
  useEffect(() => {
    const listener = (event: KeyboardEvent) => onKey(event);
    document.addEventListener("keydown", listener);
    return () => document.removeEventListener("keydown", listener);
  }, []);

  const onRowKey = (event: ReactKeyboardEvent<HTMLTableRowElement>, scan: Scan) => {
    if (event.target !== event.currentTarget) return;
    if (event.key === "ArrowDown") {
      event.preventDefault();
      move(1);
    } else if (event.key === "ArrowUp") {
      event.preventDefault();
      move(-1);
    } else if (event.key === "Enter") {
      event.preventDefault();
      navigate(paths.scan(scan.id));
    }
  };

  return (
    <table className={cn("w-full table-fixed border-collapse text-sm", busy && "opacity-70")} aria-busy={busy || undefined}>
      <caption className="sr-only">Scans. Use j and k or the arrow keys to move between rows and Enter to open one.</caption>
      <thead>
        <tr className="border-b border-paper-300 text-left text-xs font-semibold tracking-wide text-ink-muted">
          <th scope="col" className="w-[4.25rem] py-2.5 pl-4">
            <span className="sr-only">Thumbnail</span>
          </th>
          {COLUMNS.map((col) => {
            const sorted = col.sort !== undefined && col.sort === sort;
            const ariaSort = col.sort ? (sorted ? (dir === "asc" ? "ascending" : "descending") : "none") : undefined;
            return (
              <th
                key={col.label}
                scope="col"
                aria-sort={ariaSort}
                className={cn("px-3 py-2.5 whitespace-nowrap last:pr-5", col.width, col.wideOnly && WIDE_ONLY, col.className)}
              >
                {col.sort ? (
                  <button
                    type="button"
                    onClick={() => onSort(col.sort!, sorted ? (dir === "asc" ? "desc" : "asc") : (col.firstDir ?? "asc"))}
                    className={cn(
                      "-mx-1.5 inline-flex items-center gap-1 rounded px-1.5 py-0.5 hover:bg-paper-200 hover:text-ink",
                      sorted && "text-ink",
                    )}
                  >
                    {col.label}
                    <SortArrow state={sorted ? dir : undefined} />
                  </button>
                ) : (
                  col.label
                )}
              </th>
            );
          })}
        </tr>
      </thead>
      <tbody>
        {scans.map((scan, index) => {
          const physical = physicalOf(scan);
          const phys = physical ? formatPhysical(physical) : null;
          const pixels = formatPixels(scan);
          return (
            <tr
              key={scan.id}
              ref={(el) => {
                rows.current[index] = el;
              }}
              tabIndex={index === (active < 0 ? 0 : active) ? 0 : -1}
              data-active={index === active || undefined}
              onFocus={() => setActive(index)}
              onKeyDown={(e) => onRowKey(e, scan)}
              onClick={(e) => {
                if ((e.target as HTMLElement).closest("a,button")) return;
                navigate(paths.scan(scan.id));
              }}
              className="cursor-pointer border-b border-paper-200 align-middle outline-none hover:bg-white/70 focus-visible:bg-accent-faint focus-visible:shadow-[inset_3px_0_0_#2f6b5e] data-active:bg-white"
            >
              <td className="py-2 pl-4">
                <ScanThumb scan={scan} />
              </td>
              <td className="px-3 py-2">
                {/* Names often differ only at their end ("…-bed-01", "…-bed-02"): wrap onto a
                    second line rather than cut the end off. */}
                <Link
                  to={paths.scan(scan.id)}
                  tabIndex={-1}
                  className="line-clamp-2 font-medium [overflow-wrap:anywhere] text-ink hover:text-accent hover:underline"
                  title={scan.originalName}
                >
                  {scan.originalName}
                </Link>
                <span className="block truncate text-xs text-ink-muted">
                  <span className="sr-only">Intake: </span>
                  <span title={`Intake: ${scan.intake.name}`}>{scan.intake.name}</span>
                </span>
                {scan.duplicateOf && (
                  <span
                    className="mt-0.5 block text-xs leading-4 [overflow-wrap:anywhere] text-ink-muted"
                    data-testid="scan-row-duplicate-of"
                  >
                    Same file as <span className="text-ink-soft">{scan.duplicateOf.originalName}</span>
                    {scan.duplicateOf.status === "failed" ? <span className="text-brick">, which failed</span> : null}
                  </span>
                )}
              </td>
              <td className={cn("figure px-3 py-2 text-xs whitespace-nowrap text-ink-soft", WIDE_ONLY)}>
                {pixels ?? <Dash failed={scan.status === "failed"} />}
              </td>
              <td className="px-3 py-2 text-xs">
                <DpiValue dpi={scan.dpi} wrap />
                {pixels && <span className="figure mt-0.5 block whitespace-nowrap text-ink-muted @5xl:hidden">{pixels}</span>}
              </td>
              <td className="figure px-3 py-2 text-xs leading-5 whitespace-nowrap text-ink-soft">
                {phys ? (
                  <>
                    <span className="block">{phys.inches}</span>
                    <span className="block text-ink-muted">{phys.cm}</span>
                  </>
                ) : (
                  <Dash failed={scan.status === "failed"} />
                )}
              </td>
              <td className="px-3 py-2">
                <StatusBadge status={scan.status} />
                {scan.status === "analysing" && (
                  <span className="figure mt-1 block text-[11px] text-ink-muted">
                    {scan.stage ? `${scan.stage} · ` : ""}
                    {Math.round(scan.progress)}%
                  </span>
                )}
                <ReviewState scan={scan} canReview={canReview} />
              </td>
              <td className={cn("figure px-3 py-2 text-right text-xs whitespace-nowrap text-ink-soft", WIDE_ONLY)}>
                {formatBytes(scan.sizeBytes)}
              </td>
              <td className="px-3 py-2 pr-5 text-right text-xs whitespace-nowrap text-ink-muted" title={formatDateTimeLong(scan.createdAt)}>
                {formatShortDateTime(scan.createdAt)}
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

/** A figure the scan does not have: not yet (still being read), or not at all (it failed). */
function Dash({ failed = false }: { failed?: boolean }) {
  return (
    <span className="text-ink-muted">
      <span aria-hidden="true">—</span>
      <span className="sr-only">{failed ? "none: the scan could not be read" : "not known yet"}</span>
    </span>
  );
}

function SortArrow({ state }: { state?: SortDir }) {
  return (
    <svg viewBox="0 0 10 10" className={cn("size-2.5", !state && "opacity-30")} aria-hidden="true">
      {state === "asc" ? (
        <path d="M5 2 9 8H1Z" fill="currentColor" />
      ) : state === "desc" ? (
        <path d="M5 8 1 2h8Z" fill="currentColor" />
      ) : (
        <path d="M5 1 8 4H2ZM5 9 2 6h6Z" fill="currentColor" />
      )}
    </svg>
  );
}
