import { isRouteErrorResponse, Link, useRouteError } from "react-router";
import { PageHeader } from "@/components/ui/card";
import { ApiError } from "@/lib/api-client";

/** Shown when a screen's loader or render fails; says what happened in plain words. */
export function RouteError() {
  const err = useRouteError();
  let title = "Something went wrong";
  let text = "The screen could not be shown. Try again, or go back to your home screen.";
  if (isRouteErrorResponse(err)) {
    if (err.status === 403) {
      title = "Not open to your role";
      text = (err.data as { message?: string })?.message ?? text;
    } else if (err.status === 404) {
      title = "Not found";
      text = (err.data as { message?: string })?.message ?? "There is nothing at this address.";
    }
  } else if (err instanceof ApiError) {
    title = err.status === 404 ? "Not found" : title;
    text = err.message;
  }
  return (
    <div>
      <PageHeader title={title} subtitle={text} />
      <Link to="/" className="font-semibold text-strand-700 underline">
        Go to your home screen
      </Link>
    </div>
  );
}
