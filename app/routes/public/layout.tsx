import { Link, Outlet } from "react-router";
import { LogoMark } from "~/components/logo-mark";
import { optionalUser, homeFor } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await optionalUser(request);
  return { home: user ? homeFor(user.role) : null };
}

export default function PublicLayout({ loaderData }: Route.ComponentProps) {
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-line bg-card">
        <div className="mx-auto flex max-w-5xl items-center gap-3 px-4 py-2">
          <Link to="/" className="flex min-h-11 items-center gap-2 text-xl font-bold text-pine-800">
            <LogoMark className="h-9 w-9" />
            Varroute
          </Link>
          <nav aria-label="Account" className="ml-auto flex gap-2">
            {loaderData.home ? (
              <Link to={loaderData.home} className="flex min-h-11 items-center rounded-lg bg-pine-700 px-4 font-semibold text-white">
                Open my workspace
              </Link>
            ) : (
              <>
                <Link to="/sign-in" className="flex min-h-11 items-center rounded-lg px-4 font-semibold text-pine-800 hover:bg-pine-50">
                  Sign in
                </Link>
                <Link to="/sign-up" className="flex min-h-11 items-center rounded-lg bg-pine-700 px-4 font-semibold text-white hover:bg-pine-800">
                  Create an account
                </Link>
              </>
            )}
          </nav>
        </div>
      </header>
      <main id="main" className="flex-1">
        <Outlet />
      </main>
      <footer className="border-t border-line px-4 py-6 text-center text-sm text-ink-soft">
        Varroute · oxalic acid vapor treatment, booked, routed, recorded and billed.
      </footer>
    </div>
  );
}
