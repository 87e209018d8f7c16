import { useSyncExternalStore } from "react";

/** The browser's word on the network, kept current by its online/offline events. */
export function useOnline(): boolean {
  return useSyncExternalStore(
    (l) => {
      window.addEventListener("online", l);
      window.addEventListener("offline", l);
      return () => {
        window.removeEventListener("online", l);
        window.removeEventListener("offline", l);
      };
    },
    () => navigator.onLine !== false,
    () => true,
  );
}
