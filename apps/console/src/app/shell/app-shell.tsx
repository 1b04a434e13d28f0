import { NavLink, Outlet, useNavigation } from "react-router";
import { LogOut } from "lucide-react";
import { ROLES, ROLE_LABELS } from "@jogwright/shared";
import { CautionsBanner } from "../../components/layout/cautions-banner.tsx";
import { DatabaseBanner } from "../../components/layout/database-banner.tsx";
import { Badge } from "../../components/ui/badge.tsx";
import { Button } from "../../components/ui/button.tsx";
import { cn } from "../../lib/cn.ts";
import { useSignOut } from "../../features/auth/hooks/use-sign-in.ts";
import { useCurrentUser } from "../../lib/session.ts";
import { navItemsFor } from "../navigation.ts";
import { Brand } from "./brand.tsx";
import { NavCount } from "./nav-count.tsx";

export function AppShell() {
  const user = useCurrentUser();
  const signOut = useSignOut();
  const navigation = useNavigation();
  const items = navItemsFor(user.roles);

  return (
    <div className="flex min-h-dvh flex-col">
      <a
        href="#main"
        className="sr-only focus:not-sr-only focus:absolute focus:top-2 focus:left-2 focus:z-50 focus:rounded-md focus:bg-iris-400 focus:px-3 focus:py-2 focus:text-ink-950"
      >
        Skip to content
      </a>
      <CautionsBanner />
      <DatabaseBanner />
      <header data-print="hide" className="flex h-14 items-center justify-between gap-4 border-b border-ink-700 bg-ink-900 px-4">
        <Brand className="text-lg" />
        <div className="flex items-center gap-4">
          <div className="flex flex-col items-end leading-tight">
            <span className="text-sm font-semibold" data-testid="current-user">
              <span className="sr-only">Signed in as </span>
              {user.displayName}
            </span>
            <span className="flex gap-1" data-testid="current-roles">
              <span className="sr-only">Roles: </span>
              {ROLES.filter((r) => user.roles.includes(r)).map((r) => (
                <Badge key={r}>{ROLE_LABELS[r]}</Badge>
              ))}
            </span>
          </div>
          <Button variant="ghost" onClick={() => signOut.mutate()} disabled={signOut.isPending}>
            <LogOut aria-hidden className="size-4" /> Sign out
          </Button>
        </div>
      </header>
      {signOut.isError ? (
        <p role="alert" className="border-b border-stop-400/40 bg-stop-950 px-4 py-2 text-sm">
          Could not sign out: {signOut.error.message}
        </p>
      ) : null}
      <div
        aria-hidden
        className={cn("h-0.5 bg-iris-400 transition-opacity", navigation.state === "loading" ? "animate-pulse opacity-100" : "opacity-0")}
      />
      <div className="flex flex-1">
        <nav aria-label="Main" data-print="hide" className="w-52 shrink-0 border-r border-ink-700 bg-ink-900 p-3">
          <ul className="flex flex-col gap-1">
            {items.map(({ path, label, icon: Icon, badge }) => (
              <li key={path}>
                <NavLink
                  to={path}
                  end={path === "/"}
                  className={({ isActive }) =>
                    cn(
                      "flex items-center gap-3 rounded-md border-l-2 px-3 py-2 text-sm font-semibold",
                      isActive
                        ? "border-iris-400 bg-iris-950 text-iris-300"
                        : "border-transparent text-ink-300 hover:bg-ink-800 hover:text-ink-100",
                    )
                  }
                >
                  <Icon aria-hidden className="size-4" />
                  {label}
                  {badge ? <NavCount badge={badge} label={label} /> : null}
                </NavLink>
              </li>
            ))}
          </ul>
        </nav>
        <main id="main" tabIndex={-1} className="min-w-0 flex-1 px-8 py-6 focus:outline-none">
          <Outlet />
        </main>
      </div>
    </div>
  );
}
