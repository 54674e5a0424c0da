import { useNavigate } from "react-router-dom";
import { Button, Spinner } from "../../components/button";
import { NotAllowed } from "../../components/not-allowed";
import { LoadError } from "../../components/notice";
import { EmptyNote, PageHeader } from "../../components/panel";
import { useAuditEvents } from "../../features/audit/api/get-audit-events";
import { AuditDetail } from "../../features/audit/components/audit-detail";
import { AuditFiltersBar } from "../../features/audit/components/audit-filters";
import { AuditTable } from "../../features/audit/components/audit-table";
import { useAuditFilters } from "../../features/audit/components/use-audit-filters";
import { subjectPath } from "../../features/audit/format";
import { useUsers } from "../../features/users/api/get-users";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { cn } from "../../lib/cn";

const Key = ({ children }: { children: string }) => <kbd className="figure rounded border border-paper-300 bg-white px-1">{children}</kbd>;

export function AuditRoute() {
  const me = useSessionUser();
  const isAdmin = useHasRole("admin");
  if (!isAdmin) return <NotAllowed needed="admin" current={me.role} />;
  return <AuditPage />;
}

function AuditPage() {
  const navigate = useNavigate();
  const { filters, setFilters, query, filtered } = useAuditFilters();
  const list = useAuditEvents(query);
  const users = useUsers();
  const events = list.data?.pages.flatMap((p) => p.events) ?? [];
  const selected = events.find((e) => e.id === filters.eventId);

  return (
    <>
      <title>Audit trail · Platen</title>
      <PageHeader
        title="Audit trail"
        description="Who changed what in this studio, and when, with the values before and after. Nothing here can be edited."
      />
      <div className="grid grid-cols-1 items-start gap-6 xl:grid-cols-[minmax(0,1.75fr)_minmax(22rem,1fr)]">
        <section aria-label="Events" className="rounded-xl border border-paper-300 bg-paper-50 shadow-sheet">
          <div className="border-b border-paper-200 px-5 pt-4 pb-5">
            <AuditFiltersBar
              filters={filters}
              filtered={filtered}
              actors={(users.data ?? []).map((u) => ({ id: u.id, name: u.name, email: u.email }))}
              onChange={setFilters}
            />
            {filters.subjectId && (
              <p className="mt-3 text-xs text-ink-soft">
                Showing one {filters.subjectType ?? "subject"} only <span className="figure text-ink-muted">({filters.subjectId})</span> ·{" "}
                <button
                  type="button"
                  className="font-medium text-accent hover:underline"
                  onClick={() => setFilters({ subjectId: undefined, eventId: undefined })}
                >
                  show all
                </button>
              </p>
            )}
          </div>
          {list.isPending ? (
            <p className="flex items-center gap-2 px-5 py-6 text-sm text-ink-muted">
              <Spinner /> Loading the trail…
            </p>
          ) : list.isError && !list.data ? (
            <div className="p-5">
              <LoadError error={list.error} onRetry={() => void list.refetch()} />
            </div>
          ) : events.length === 0 ? (
            <div className="px-5 py-6">
              <EmptyNote>{filtered ? "No events match these filters." : "Nothing has been recorded yet."}</EmptyNote>
            </div>
          ) : (
            <>
              <AuditTable
                events={events}
                selectedId={filters.eventId}
                busy={list.isPlaceholderData}
                onSelect={(eventId) => setFilters({ eventId })}
                onOpenSubject={(e) => {
                  const to = subjectPath(e);
                  if (to) navigate(to);
                }}
              />
              <footer className="flex items-center justify-between gap-4 px-5 py-3 text-xs text-ink-muted">
                <span>
                  <Key>j</Key> <Key>k</Key> or arrows to move, <Key>Enter</Key> to open what it is about, <Key>/</Key> to search,{" "}
                  <Key>Esc</Key> to close
                </span>
                <span className="flex items-center gap-3">
                  <span className="figure" aria-live="polite">
                    {events.length} {events.length === 1 ? "event" : "events"}
                    {list.hasNextPage ? " so far" : ""}
                  </span>
                  {list.hasNextPage && (
                    <Button size="sm" busy={list.isFetchingNextPage} onClick={() => void list.fetchNextPage()}>
                      Load older
                    </Button>
                  )}
                </span>
              </footer>
            </>
          )}
        </section>
        <aside
          aria-label="The open event"
          className={cn(
            "border-paper-300 bg-paper-50 px-5 py-4 shadow-sheet xl:sticky xl:top-6 xl:block xl:rounded-xl xl:border",
            // Beside the list on a wide screen; on a narrower one, a sheet over its right side while
            // an event is open (below the list it would be out of sight).
            filters.eventId
              ? "fixed inset-y-0 right-0 z-30 w-full max-w-md overflow-y-auto border-l xl:static xl:max-w-none xl:overflow-visible"
              : "hidden",
          )}
        >
          {filters.eventId && (
            <div className="mb-2 flex justify-end xl:hidden">
              <Button size="sm" variant="quiet" onClick={() => setFilters({ eventId: undefined })}>
                Close
              </Button>
            </div>
          )}
          {filters.eventId ? (
            <AuditDetail id={filters.eventId} preview={selected} />
          ) : (
            <p className="text-sm text-ink-muted">Pick an event to see who made it, from where, and each changed field before and after.</p>
          )}
        </aside>
      </div>
    </>
  );
}
