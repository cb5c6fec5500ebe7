import { isRouteErrorResponse, Link, useRouteError } from "react-router";

/** Shared error boundary body: says what happened in plain words, and never leaks a stack in production. */
export function ErrorView() {
  const error = useRouteError();
  let status = 500;
  let title = "Something went wrong";
  let detail = "The server could not complete this request. The error has been logged.";
  if (isRouteErrorResponse(error)) {
    status = error.status;
    const message = typeof error.data === "object" && error.data && "message" in error.data ? String(error.data.message) : undefined;
    if (status === 403) {
      title = "Not allowed";
      detail = message ?? "Your role does not allow this.";
    } else if (status === 404) {
      title = "Not found";
      detail = message ?? "There is nothing at this address.";
    } else if (status === 503) {
      title = "Busy right now";
      detail = message ?? "The server is busy; try again in a moment.";
    } else {
      title = error.statusText || title;
      detail = message ?? detail;
    }
  } else if (import.meta.env.DEV && error instanceof Error) {
    detail = error.message;
  }
  return (
    <section className="card mx-auto max-w-xl space-y-3 p-8" data-error-status={status}>
      <p className="num text-sm text-muted">{status}</p>
      <h1 className="text-2xl font-semibold">{title}</h1>
      <p className="text-muted">{detail}</p>
      <Link to="/" className="btn-quiet">
        Back to the overview
      </Link>
    </section>
  );
}

export function RouteErrorBoundary() {
  return <ErrorView />;
}
