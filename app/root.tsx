import { useEffect } from "react";
import { isRouteErrorResponse, Links, Meta, Outlet, redirect, Scripts, ScrollRestoration } from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { ErrorPage } from "./components/error-page";
import { businessSetUpRemembered } from "./models/setup.server";
import { db } from "./services/db.server";

// First run: until the business is set up (an owner account exists), every page leads to
// the setup page. Resource routes (/healthz, /api/…) never run this loader and static files
// never reach React Router; both stay as they are. Once set up, the answer is remembered and
// the check costs nothing.
export async function loader({ request }: Route.LoaderArgs) {
  const path = new URL(request.url).pathname.replace(/\.data$/, "");
  if (path !== "/setup" && !(await businessSetUpRemembered(db))) throw redirect("/setup");
  return null;
}

export const links: Route.LinksFunction = () => [{ rel: "icon", href: "/favicon.svg", type: "image/svg+xml" }];

export function Layout({ children }: { children: React.ReactNode }) {
  // Marks the page as interactive once React has taken over the server's HTML: a value typed
  // before that would be dropped by hydration, so the browser tests wait for this mark.
  useEffect(() => {
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <meta name="theme-color" content="#175a43" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen bg-paper font-sans text-ink antialiased">
        {children}
        {/* Both inline their scripts with this response's CSP nonce: ServerRouter in
            app/entry.server.tsx passes it to them (React Router 7's nonce default). */}
        <ScrollRestoration />
        <Scripts />
      </body>
    </html>
  );
}

export default function App() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  if (isRouteErrorResponse(error)) {
    const detail = typeof error.data === "string" ? error.data : undefined;
    return <ErrorPage status={error.status} detail={detail} />;
  }
  const detail = import.meta.env.DEV && error instanceof Error ? error.stack : undefined;
  return <ErrorPage status={500} detail={detail} />;
}
