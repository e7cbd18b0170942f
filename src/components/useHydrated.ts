import { useSyncExternalStore } from 'react';

const subscribe = () => () => {};

/**
 * False in the server's HTML and while React hydrates it, true once the island runs in the browser:
 * for `data-hydrated` (what tests wait for before they click) and for buttons that must not act
 * before their handlers are attached.
 */
export function useHydrated(): boolean {
  return useSyncExternalStore(subscribe, () => true, () => false);
}
