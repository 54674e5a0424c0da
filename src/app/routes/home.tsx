import { Navigate } from "react-router-dom";
import { paths } from "../../config/paths";
import { useHasRole } from "../../lib/authorization";

/** The home address: operators and admins start at the queue, viewers at the approved work. */
export function HomeRoute() {
  const isOperator = useHasRole("operator");
  return <Navigate to={isOperator ? paths.queue : paths.work} replace />;
}
