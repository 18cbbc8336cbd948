import type { ReactNode } from "react";
import { Form, Link, NavLink } from "react-router";
import { LogoMark } from "./logo-mark";

export type NavItem = { to: string; label: string; end?: boolean };

const ROLE_NAMES: Record<string, string> = {
  customer: "Customer",
  crew: "Crew",
  dispatcher: "Dispatcher",
  office: "Office",
  owner: "Owner",
};

function SignOutButton() {
  return (
    <Form method="post" action="/sign-out">
      <button type="submit" className="min-h-11 rounded-lg border-2 border-pine-100 px-4 font-semibold text-white hover:bg-pine-800">
        Sign out
      </button>
    </Form>
  );
}

/** The frame of every signed-in page: brand, the role's navigation, who is signed in. */
export function AppShell({
  nav,
  user,
  children,
  width = "wide",
}: {
  nav: NavItem[];
  user: { name: string; role: string };
  children: ReactNode;
  width?: "wide" | "narrow";
}) {
  const links = nav.map((item) => (
    <NavLink
      key={item.to}
      to={item.to}
      end={item.end}
      className={({ isActive }) =>
        `flex min-h-11 items-center rounded-lg px-3 font-semibold ${isActive ? "bg-pine-900 text-white" : "text-pine-50 hover:bg-pine-800"}`
      }
    >
      {item.label}
    </NavLink>
  ));
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:z-50 focus:m-2 focus:rounded focus:bg-card focus:p-3">
        Skip to content
      </a>
      <header className="bg-pine-700 text-white">
        <div className="mx-auto flex max-w-7xl items-center gap-3 px-4 py-2">
          <Link to="/" className="flex min-h-11 items-center gap-2 text-xl font-bold">
            <LogoMark className="h-9 w-9" onDark />
            <span>Varroute</span>
          </Link>
          <nav aria-label="Main" className="ml-4 hidden flex-1 items-center gap-1 md:flex">
            {links}
          </nav>
          <div className="ml-auto hidden items-center gap-3 md:flex">
            <span className="text-right text-sm leading-tight">
              <span className="block font-semibold">{user.name}</span>
              <span className="block text-pine-100">{ROLE_NAMES[user.role] ?? user.role}</span>
            </span>
            <SignOutButton />
          </div>
          <details className="group relative ml-auto md:hidden">
            <summary className="flex min-h-11 cursor-pointer list-none items-center rounded-lg border-2 border-pine-100 px-4 font-semibold">
              Menu
            </summary>
            <div className="absolute right-0 z-40 mt-2 w-64 rounded-xl bg-pine-700 p-3 shadow-xl">
              <p className="mb-2 border-b border-pine-600 pb-2 text-sm">
                <span className="block font-semibold">{user.name}</span>
                <span className="text-pine-100">{ROLE_NAMES[user.role] ?? user.role}</span>
              </p>
              <nav aria-label="Main" className="flex flex-col gap-1">
                {links}
              </nav>
              <div className="mt-3">
                <SignOutButton />
              </div>
            </div>
          </details>
        </div>
      </header>
      <main id="main" className={`mx-auto px-4 py-6 ${width === "wide" ? "max-w-7xl" : "max-w-2xl"}`}>
        {children}
      </main>
    </div>
  );
}
