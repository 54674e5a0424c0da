import { Link, useSearchParams } from "react-router-dom";
import { PublicPage } from "../../components/public-page";
import { paths } from "../../config/paths";
import { ForgotPasswordForm } from "../../features/auth/components/forgot-password-form";

export function ForgotPasswordRoute() {
  const [params] = useSearchParams();
  return (
    <PublicPage
      title="Forgot password"
      heading="Forgot your password?"
      subheading="We send a link to choose a new one."
      below={
        <Link to={paths.signIn} className="font-medium text-accent hover:underline">
          Back to sign-in
        </Link>
      }
    >
      <ForgotPasswordForm initialEmail={params.get("email") ?? ""} />
    </PublicPage>
  );
}
