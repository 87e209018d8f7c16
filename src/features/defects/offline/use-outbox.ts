import { useSyncExternalStore } from "react";
import type { OutboxSnapshot } from "./outbox";
import { getOutbox } from "./outbox-instance";

/** What waits on this device for the signed-in user, kept current as the sender works. */
export function useOutbox(): OutboxSnapshot {
  const outbox = getOutbox();
  return useSyncExternalStore(outbox.subscribe, outbox.getSnapshot, outbox.getSnapshot);
}
