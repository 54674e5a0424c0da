import { createBrowserRouter, Navigate } from "react-router-dom";
import { paths } from "../config/paths";
import { ProtectedLayout } from "./layout/protected-layout";
import { NotFoundRoute } from "./routes/not-found";
import { QueueRoute } from "./routes/queue";
import { ScanRoute } from "./routes/scan";
import { ScansRoute } from "./routes/scans";
import { SignInRoute } from "./routes/sign-in";
import { UsersRoute } from "./routes/users";

export function createRouter() {
  return createBrowserRouter([
    { path: paths.signIn, element: <SignInRoute /> },
    {
      element: <ProtectedLayout />,
      children: [
        { index: true, element: <Navigate to={paths.queue} replace /> },
        { path: paths.queue, element: <QueueRoute /> },
        { path: paths.scans, element: <ScansRoute /> },
        { path: "/scans/:id", element: <ScanRoute /> },
        { path: paths.users, element: <UsersRoute /> },
        { path: "*", element: <NotFoundRoute /> },
      ],
    },
  ]);
}
