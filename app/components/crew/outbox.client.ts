import { openDB, type DBSchema, type IDBPDatabase } from "idb";
import type { FieldChange, FieldRun, SyncResult } from "./field-types";

// What the phone keeps in IndexedDB: the last run snapshot per day, the changes not yet
// confirmed by the server (in the order they were made), and changes the server could not
// apply (conflicts and refusals), kept to be shown until the crew dismisses them.
interface CrewDb extends DBSchema {
  runs: { key: string; value: FieldRun };
  outbox: { key: string; value: FieldChange; indexes: { byCreated: string } };
  problems: { key: string; value: { change: FieldChange; result: SyncResult } };
  /** Changes the server took, with the server's time; shown until a newer snapshot has them. */
  confirmed: { key: string; value: { change: FieldChange; serverTime: string } };
}

let database: Promise<IDBPDatabase<CrewDb>> | undefined;
function crewDb() {
  database ??= openDB<CrewDb>("varroute-crew", 2, {
    upgrade(db, oldVersion) {
      if (oldVersion < 1) {
        db.createObjectStore("runs");
        db.createObjectStore("outbox", { keyPath: "key" }).createIndex("byCreated", "createdAt");
        db.createObjectStore("problems");
      }
      if (oldVersion < 2) db.createObjectStore("confirmed");
    },
  });
  return database;
}

export async function saveRunSnapshot(run: FieldRun) {
  const db = await crewDb();
  const existing = await db.get("runs", run.serviceDate);
  // Never replace a newer snapshot with an older one (a stale cached page after a reload).
  if (existing && existing.runId === run.runId && existing.loadedAt > run.loadedAt) return existing;
  await db.put("runs", run, run.serviceDate);
  // Confirmed changes this snapshot already holds are no longer needed.
  for (const entry of await db.getAll("confirmed")) {
    if (entry.serverTime <= run.loadedAt) await db.delete("confirmed", entry.change.key);
  }
  return run;
}

/** Changes the server took after `loadedAt` (so the snapshot may not show them yet), oldest first. */
export async function confirmedSince(loadedAt: string): Promise<FieldChange[]> {
  const entries = await (await crewDb()).getAll("confirmed");
  return entries
    .filter((e) => e.serverTime > loadedAt)
    .sort((a, b) => a.change.createdAt.localeCompare(b.change.createdAt))
    .map((e) => e.change);
}

export async function loadRunSnapshot(serviceDate: string): Promise<FieldRun | undefined> {
  return (await crewDb()).get("runs", serviceDate);
}

export async function addChange(change: FieldChange) {
  await (await crewDb()).put("outbox", change);
}

export async function pendingChanges(): Promise<FieldChange[]> {
  return (await crewDb()).getAllFromIndex("outbox", "byCreated");
}

export async function problemChanges() {
  return (await crewDb()).getAll("problems");
}

export async function dismissProblem(key: string) {
  await (await crewDb()).delete("problems", key);
}

let syncing: Promise<{ sent: number; problems: number }> | null = null;
let again = false;

/** Sends every pending change, oldest first. Applied and duplicate changes leave the
 *  outbox; conflicts and refusals move to `problems`. Offline: nothing happens. A change
 *  made while a request is under way is sent right after it. */
export async function syncOutbox(): Promise<{ sent: number; problems: number }> {
  if (syncing) {
    again = true;
    return syncing;
  }
  let sent = 0;
  let problems = 0;
  do {
    again = false;
    syncing = sendOnce();
    try {
      const result = await syncing;
      sent += result.sent;
      problems += result.problems;
    } finally {
      syncing = null;
    }
  } while (again);
  return { sent, problems };
}

async function sendOnce(): Promise<{ sent: number; problems: number }> {
    const changes = await pendingChanges();
    if (changes.length === 0 || (typeof navigator !== "undefined" && !navigator.onLine)) return { sent: 0, problems: 0 };
    const response = await fetch("/api/crew/sync", {
      method: "POST",
      headers: { "Content-Type": "application/json", Accept: "application/json" },
      body: JSON.stringify({ changes }),
    });
    if (!response.ok) throw new Error(`sync answered ${response.status}`);
    const { results, serverTime } = (await response.json()) as { results: SyncResult[]; serverTime: string };
    const db = await crewDb();
    const tx = db.transaction(["outbox", "problems", "confirmed"], "readwrite");
    let problems = 0;
    for (const result of results) {
      const change = changes.find((c) => c.key === result.key);
      if (!change) continue;
      await tx.objectStore("outbox").delete(result.key);
      if (result.status === "conflict" || result.status === "refused") {
        problems++;
        await tx.objectStore("problems").put({ change, result }, result.key);
      } else {
        await tx.objectStore("confirmed").put({ change, serverTime }, result.key);
      }
    }
    await tx.done;
    return { sent: results.length, problems };
}
