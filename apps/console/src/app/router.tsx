import { createBrowserRouter, RouterProvider, type RouteObject } from "react-router";
import { NAV_ITEMS } from "./navigation.ts";
import { AppShell } from "./shell/app-shell.tsx";
import { BootScreen } from "./shell/boot-screen.tsx";
import { RequireSession } from "./shell/require-session.tsx";
import { RoleGate } from "./shell/role-gate.tsx";
import { RouteError } from "./routes/route-error.tsx";
import { NotFoundRoute } from "./routes/not-found-route.tsx";

// Every signed-in page comes from NAV_ITEMS: a role gate with the item's roles, then the lazily loaded
// page, each with its own error boundary so a failing page leaves the shell and navigation usable.
const pageRoutes: RouteObject[] = NAV_ITEMS.map((item) => ({
  path: item.path,
  element: <RoleGate roles={item.roles} />,
  ErrorBoundary: RouteError,
  children: [
    {
      index: true,
      ErrorBoundary: RouteError,
      lazy: async () => ({ Component: (await item.load()).default }),
    },
    ...(item.children ?? []).map((child) => ({
      path: child.path,
      ErrorBoundary: RouteError,
      lazy: async () => ({ Component: (await child.load()).default }),
    })),
  ],
}));

const routes: RouteObject[] = [
  {
    id: "root",
    HydrateFallback: BootScreen,
    ErrorBoundary: RouteError,
    children: [
      {
        path: "/sign-in",
        ErrorBoundary: RouteError,
        lazy: async () => ({ Component: (await import("./routes/sign-in-route.tsx")).default }),
      },
      {
        element: <RequireSession />,
        children: [
          {
            element: <AppShell />,
            children: [...pageRoutes, { path: "*", Component: NotFoundRoute, ErrorBoundary: RouteError }],
          },
        ],
      },
    ],
  },
];

const router = createBrowserRouter(routes);

export function AppRouter() {
  return <RouterProvider router={router} />;
}
