import { createBrowserRouter } from "react-router-dom";
import { paths } from "../config/paths";
import { ProtectedLayout } from "./layout/protected-layout";
import { AuditRoute } from "./routes/audit";
import { LibraryRoute } from "./routes/library";
import { StudioRoute } from "./routes/studio";
import { BatchRoute } from "./routes/batch";
import { BatchNewRoute } from "./routes/batch-new";
import { BatchesRoute } from "./routes/batches";
import { FragmentRoute } from "./routes/fragment";
import { HomeRoute } from "./routes/home";
import { NotFoundRoute } from "./routes/not-found";
import { PresetNewRoute, PresetRoute } from "./routes/preset";
import { PresetsRoute } from "./routes/presets";
import { QueueRoute } from "./routes/queue";
import { RecipeRoute } from "./routes/recipe";
import { RecipeApplyRoute } from "./routes/recipe-apply";
import { RecipesRoute } from "./routes/recipes";
import { ScanRoute } from "./routes/scan";
import { ScanReviewRoute } from "./routes/scan-review";
import { ScansRoute } from "./routes/scans";
import { SignInRoute } from "./routes/sign-in";
import { UsersRoute } from "./routes/users";
import { AccountRoute } from "./routes/account";
import { ForgotPasswordRoute } from "./routes/forgot-password";
import { JoinRoute } from "./routes/join";
import { MailboxRoute } from "./routes/mailbox";
import { ResetPasswordRoute } from "./routes/reset-password";
import { WorkRoute } from "./routes/work";

export function createRouter() {
  return createBrowserRouter([
    { path: paths.signIn, element: <SignInRoute /> },
    { path: paths.forgotPassword, element: <ForgotPasswordRoute /> },
    { path: paths.join, element: <JoinRoute /> },
    { path: paths.resetPassword, element: <ResetPasswordRoute /> },
    {
      element: <ProtectedLayout />,
      children: [
        { index: true, element: <HomeRoute /> },
        { path: paths.queue, element: <QueueRoute /> },
        { path: paths.scans, element: <ScansRoute /> },
        { path: "/scans/:id", element: <ScanRoute /> },
        { path: "/scans/:id/review", element: <ScanReviewRoute /> },
        { path: "/fragments/:id", element: <FragmentRoute /> },
        { path: paths.work, element: <WorkRoute /> },
        { path: paths.recipes, element: <RecipesRoute /> },
        { path: "/recipes/:id", element: <RecipeRoute /> },
        { path: "/recipes/:id/apply", element: <RecipeApplyRoute /> },
        { path: paths.users, element: <UsersRoute /> },
        { path: paths.account, element: <AccountRoute /> },
        { path: paths.mailbox, element: <MailboxRoute /> },
        { path: paths.audit, element: <AuditRoute /> },
        { path: paths.library, element: <LibraryRoute /> },
        { path: paths.studio, element: <StudioRoute /> },
        { path: paths.presets, element: <PresetsRoute /> },
        { path: paths.presetNew, element: <PresetNewRoute /> },
        { path: "/presets/:id", element: <PresetRoute /> },
        { path: paths.batches, element: <BatchesRoute /> },
        { path: paths.batchNew, element: <BatchNewRoute /> },
        { path: "/batches/:id", element: <BatchRoute /> },
        { path: "*", element: <NotFoundRoute /> },
      ],
    },
  ]);
}
