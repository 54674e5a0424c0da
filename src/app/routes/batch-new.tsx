import { Link, useSearchParams } from "react-router-dom";
import { NotAllowed } from "../../components/not-allowed";
import { PageHeader } from "../../components/panel";
import { paths } from "../../config/paths";
import { BatchBuilder } from "../../features/batches/components/batch-builder";
import { useHasRole, useSessionUser } from "../../lib/authorization";

export function BatchNewRoute() {
  const me = useSessionUser();
  const [params] = useSearchParams();
  if (!useHasRole("operator")) return <NotAllowed needed="operator" current={me.role} />;
  return (
    <>
      <title>New batch · Platen</title>
      <PageHeader
        title="New batch"
        description={
          <>
            Pick fragments and presets; outputs already made the same way are reused.{" "}
            <Link to={paths.batches} className="font-medium text-accent underline underline-offset-2">
              All batches
            </Link>
          </>
        }
      />
      <BatchBuilder
        initialFilter={{
          status: "approved",
          intakeId: params.get("intake") || undefined,
          scanId: params.get("scan") || undefined,
        }}
      />
    </>
  );
}
