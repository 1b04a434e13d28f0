import { Navigate, useSearchParams } from "react-router";
import { CautionsBanner } from "../../components/layout/cautions-banner.tsx";
import { Loading } from "../../components/ui/loading.tsx";
import { Message } from "../../components/ui/message.tsx";
import { SignInForm } from "../../features/auth/components/sign-in-form.tsx";
import { useSession } from "../../lib/session.ts";
import { Brand } from "../shell/brand.tsx";
import { DocumentTitle } from "../../components/layout/document-title.tsx";

/** Only same-site paths are followed after sign-in ("//host" would leave the site). */
function safeNext(next: string | null): string {
  if (!next || !next.startsWith("/") || next.startsWith("//") || next.startsWith("/sign-in")) return "/";
  return next;
}

export default function SignInRoute() {
  const session = useSession();
  const [params] = useSearchParams();
  const next = safeNext(params.get("next"));

  if (session.data?.user) return <Navigate to={next} replace />;

  return (
    <div className="flex min-h-dvh flex-col">
      <DocumentTitle page="Sign in" />
      <CautionsBanner />
      <main className="flex flex-1 items-center justify-center p-6">
        <div className="w-full max-w-sm rounded-lg border border-ink-700 bg-ink-850 p-6 shadow-xl">
          <Brand className="mb-1 text-xl" />
          <h1 className="mb-1 text-2xl font-bold">Sign in</h1>
          <p className="mb-6 text-sm text-ink-300">Tune, approve and drive jogging of a simulated arm.</p>
          {session.isPending ? <Loading label="Checking your session…" /> : null}
          {session.isError ? (
            <Message tone="warn" className="mb-4" title="Cannot reach the server">
              {session.error.message}
            </Message>
          ) : null}
          {!session.isPending ? <SignInForm /> : null}
        </div>
      </main>
    </div>
  );
}
