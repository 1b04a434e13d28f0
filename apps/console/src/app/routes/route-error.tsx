import { isRouteErrorResponse, Link, useRouteError } from "react-router";
import { Button } from "../../components/ui/button.tsx";
import { Message } from "../../components/ui/message.tsx";
import { describeError } from "../../lib/api-client.ts";

/** Error boundary for every route: says what failed and offers a way on, without losing the shell. */
export function RouteError() {
  const error = useRouteError();
  const text = isRouteErrorResponse(error) ? `${error.status} ${error.statusText}` : describeError(error);
  // A page module that fails to load usually means a newer console was deployed; a reload fetches it.
  const isStaleBundle = error instanceof TypeError && /dynamically imported module|Importing a module script/i.test(error.message);
  return (
    <div className="flex max-w-2xl flex-col gap-4 p-6">
      <Message tone="stop" title={isStaleBundle ? "This page could not be loaded" : "This page ran into a problem"}>
        {isStaleBundle ? "The console may have been updated. Reload to get the current version." : text}
      </Message>
      <div className="flex gap-2">
        <Button variant="primary" onClick={() => window.location.reload()}>
          Reload
        </Button>
        <Link to="/" className="inline-flex h-9 items-center rounded-md px-4 text-sm font-semibold text-iris-300 hover:underline">
          Go to the overview
        </Link>
      </div>
    </div>
  );
}
