import { Navigate, Outlet, useLocation } from "react-router";
import { Button } from "../../components/ui/button.tsx";
import { Message } from "../../components/ui/message.tsx";
import { useSession } from "../../lib/session.ts";
import { BootScreen } from "./boot-screen.tsx";

/** Lets signed-in people through; sends everyone else to /sign-in?next=<where they were going>. */
export function RequireSession() {
  const session = useSession();
  const location = useLocation();

  if (session.data) {
    if (session.data.user) return <Outlet />;
    const next = location.pathname + location.search;
    const to = session.data.hasSignedOut || next === "/" ? "/sign-in" : `/sign-in?next=${encodeURIComponent(next)}`;
    return <Navigate to={to} replace />;
  }
  if (session.isError) {
    return (
      <div className="mx-auto flex min-h-dvh max-w-lg flex-col justify-center gap-4 p-6">
        <Message tone="stop" title="Cannot check your session">
          {session.error.message}
        </Message>
        <Button onClick={() => void session.refetch()} className="self-start">
          Try again
        </Button>
      </div>
    );
  }
  return <BootScreen />;
}
