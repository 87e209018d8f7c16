import { i18n } from "@/i18n";
import { createOutbox, type Outbox } from "./outbox";
import { apiTransport } from "./outbox-transport";

let instance: Outbox | null = null;

/** The one outbox of this tab, woken when the network comes back or the tablet wakes up. */
export function getOutbox(): Outbox {
  if (instance) return instance;
  // The outbox's own words (a full storage, an entry busy sending) are in the catalogue `yard`: here
  // before one is needed, on whichever screen the tablet is.
  void i18n.loadNamespaces("yard").catch(() => undefined);
  instance = createOutbox({
    transport: apiTransport,
    heartbeatMs: 30_000,
    onWake(wake) {
      const onVisible = () => {
        if (document.visibilityState === "visible") wake();
      };
      window.addEventListener("online", wake);
      window.addEventListener("offline", wake);
      document.addEventListener("visibilitychange", onVisible);
      return () => {
        window.removeEventListener("online", wake);
        window.removeEventListener("offline", wake);
        document.removeEventListener("visibilitychange", onVisible);
      };
    },
  });
  // Ask the browser to keep this origin's storage under pressure: waiting entries live there.
  void navigator.storage?.persist?.().catch(() => undefined);
  return instance;
}
