import { useSyncExternalStore } from "react";

const noop = () => () => {};

/** False on the server and during hydration, true once the browser has taken over:
 *  for components (maps, calendars) that touch `window` when they load. */
export function useHydrated(): boolean {
  return useSyncExternalStore(noop, () => true, () => false);
}
