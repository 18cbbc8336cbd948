import type { NavItem } from "./app-shell";

// Each area's navigation, in one place: the area layouts draw it, and so does the profile
// page (/profile, outside the areas), which shows the navigation of the person's own area.
// Plain data, safe for the browser.

const PROFILE: NavItem = { to: "/profile", label: "Profile" };

export function portalNav(): NavItem[] {
  return [
    { to: "/portal", label: "My yards and visits", end: true },
    { to: "/portal/book", label: "Book a treatment" },
    { to: "/portal/bookings", label: "My bookings" },
    { to: "/portal/invoices", label: "Invoices" },
    { to: "/portal/season", label: "Season report" },
    { to: "/portal/account", label: "Account" },
    PROFILE,
  ];
}

export function dispatchNav(role: string): NavItem[] {
  return [
    { to: "/dispatch", label: "Days ahead", end: true },
    { to: "/dispatch/calendar", label: "Calendar" },
    { to: "/dispatch/map", label: "Map" },
    { to: "/dispatch/customers", label: "Customers" },
    { to: "/dispatch/yards", label: "Yards" },
    { to: "/dispatch/crews", label: "Crews" },
    { to: "/dispatch/settings", label: "Settings" },
    ...(role === "owner" ? [{ to: "/office", label: "Office" }] : []),
    PROFILE,
  ];
}

export function crewNav(): NavItem[] {
  return [{ to: "/crew", label: "Today's run", end: true }, PROFILE];
}

export function officeNav(role: string): NavItem[] {
  return [
    { to: "/office", label: "Overview", end: true },
    { to: "/office/customers", label: "Customers" },
    { to: "/office/invoices", label: "Invoices" },
    { to: "/office/records", label: "Records" },
    { to: "/office/dashboard", label: "Season" },
    ...(role === "owner" ? [{ to: "/office/audit", label: "Audit trail" }] : []),
    ...(role === "owner" ? [{ to: "/office/staff", label: "Staff" }] : []),
    ...(role === "owner" ? [{ to: "/dispatch", label: "Dispatch" }] : []),
    PROFILE,
  ];
}

/**
 * The navigation of a role's own area (the one it lands in after signing in), with the
 * frame's width: the crew's phone screens are narrow.
 */
export function areaNavFor(role: string): { nav: NavItem[]; width: "wide" | "narrow" } {
  switch (role) {
    case "customer":
      return { nav: portalNav(), width: "wide" };
    case "crew":
      return { nav: crewNav(), width: "narrow" };
    case "office":
      return { nav: officeNav(role), width: "wide" };
    default:
      return { nav: dispatchNav(role), width: "wide" };
  }
}
