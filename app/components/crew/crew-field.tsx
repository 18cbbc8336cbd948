import { useCallback, useEffect, useMemo, useRef, useState } from "react";
import { useRevalidator } from "react-router";
import { formatDistance, formatDose, formatDuration, formatTemperature } from "~/domain/units";
import { formatServiceDate } from "../format";
import { SafetyCautions } from "../safety-cautions";
import { applyChanges, newChangeKey, stopTotals } from "./field-state";
import type { FieldChange, FieldRun, FieldTally, SafetyItems, SyncResult } from "./field-types";
import { SafetyCheck } from "./safety-check";
import { StopView } from "./stop-view";

type Outbox = typeof import("./outbox.client");

/** The crew's run on the phone. Every change is kept on the phone first and sent when
 *  there is a connection, so the work goes on with no signal and nothing is lost. */
export function CrewField({ serverRun, title }: { serverRun: FieldRun; title: string }) {
  const [outbox, setOutbox] = useState<Outbox | null>(null);
  const [snapshot, setSnapshot] = useState<FieldRun>(serverRun);
  const [pending, setPending] = useState<FieldChange[]>([]);
  const [confirmed, setConfirmed] = useState<FieldChange[]>([]);
  const [problems, setProblems] = useState<{ change: FieldChange; result: SyncResult }[]>([]);
  const [online, setOnline] = useState(true);
  const [syncError, setSyncError] = useState<string | null>(null);
  const [openStop, setOpenStop] = useState<number | null>(null);
  const revalidator = useRevalidator();
  const revalidate = useRef(revalidator.revalidate);
  revalidate.current = revalidator.revalidate;
  const snapshotTime = useRef(serverRun.loadedAt);

  // Reads from the phone's store can finish out of order; only the latest one is shown.
  const latestRefresh = useRef(0);
  const refresh = useCallback(async (box: Outbox) => {
    const mine = ++latestRefresh.current;
    const [nextPending, nextProblems, nextConfirmed] = await Promise.all([box.pendingChanges(), box.problemChanges(), box.confirmedSince(snapshotTime.current)]);
    if (mine !== latestRefresh.current) return;
    setPending(nextPending);
    setProblems(nextProblems);
    setConfirmed(nextConfirmed);
  }, []);

  const sync = useCallback(
    async (box: Outbox) => {
      if (!navigator.onLine) return;
      try {
        const { sent } = await box.syncOutbox();
        setSyncError(null);
        setOnline(true);
        await refresh(box);
        if (sent > 0) void revalidate.current();
      } catch (error) {
        // fetch fails with a TypeError when no network answers at all: that is no signal,
        // whatever navigator.onLine says (it can stay true on a page the phone kept).
        if (error instanceof TypeError) setOnline(false);
        setSyncError("Could not reach the office. Your work is kept on this phone and will be sent later.");
      }
    },
    [refresh],
  );

  // Load the phone's store, keep the newest snapshot, and send what is waiting.
  useEffect(() => {
    let live = true;
    void import("./outbox.client").then(async (box) => {
      if (!live) return;
      setOutbox(box);
      const kept = await box.saveRunSnapshot(serverRun);
      snapshotTime.current = kept.loadedAt;
      setSnapshot(kept);
      await refresh(box);
      void sync(box);
    });
    return () => {
      live = false;
    };
  }, [serverRun, refresh, sync]);

  useEffect(() => {
    setOnline(navigator.onLine);
    const up = () => {
      setOnline(true);
      if (outbox) void sync(outbox);
    };
    const down = () => setOnline(false);
    window.addEventListener("online", up);
    window.addEventListener("offline", down);
    const timer = setInterval(() => outbox && void sync(outbox), 30_000);
    return () => {
      window.removeEventListener("online", up);
      window.removeEventListener("offline", down);
      clearInterval(timer);
    };
  }, [outbox, sync]);

  // The service worker keeps this page and its files, so a reload with no signal still works.
  useEffect(() => {
    if (!("serviceWorker" in navigator)) return;
    void navigator.serviceWorker
      .register("/crew-sw.js", { scope: "/" })
      .then(() => navigator.serviceWorker.ready)
      .then((registration) => {
        const urls = [location.href, ...performance.getEntriesByType("resource").map((e) => e.name).filter((u) => u.includes("/assets/"))];
        registration.active?.postMessage({ type: "keep", urls });
      })
      .catch(() => undefined);
  }, []);

  // The server's snapshot, then what the server took since it was made, then what waits.
  const run = useMemo(() => applyChanges(snapshot, [...confirmed, ...pending]), [snapshot, confirmed, pending]);

  async function record(change: Omit<FieldChange, "key" | "runId" | "runVersion" | "createdAt">) {
    if (!outbox) return;
    const full = { ...change, key: newChangeKey(change.kind), runId: run.runId, runVersion: run.version, createdAt: new Date().toISOString() } as FieldChange;
    await outbox.addChange(full);
    await refresh(outbox);
    void sync(outbox);
  }

  const totals = run.stops.map(stopTotals);
  const stop = openStop === null ? null : run.stops.find((s) => s.visitId === openStop) ?? null;

  const statusBar = (
    <div
      role="status"
      data-testid="sync-status"
      // Always one line high and pinned to the top, so taps never land on a moved button.
      className={`sticky top-0 z-30 mb-3 flex min-h-12 items-center truncate rounded-lg px-3 text-lg font-bold shadow ${!online ? "bg-ink text-white" : pending.length ? "bg-ochre-100 text-ink" : "bg-pine-50 text-pine-900"}`}
    >
      {!online ? "No signal — " : syncError ? "Not reached — " : ""}
      {pending.length === 0 ? "All work sent" : `${pending.length} change${pending.length === 1 ? "" : "s"} not sent yet`}
    </div>
  );

  const problemList = problems.length || syncError ? (
    <>
    {syncError ? <p className="mb-3 rounded-lg border-2 border-ochre-500 bg-ochre-100 p-3 font-semibold">{syncError}</p> : null}
    {problems.length ? (
    <div role="alert" className="mb-3 rounded-lg border-2 border-alarm-700 bg-alarm-100 p-3">
      <p className="font-bold">The office could not take {problems.length === 1 ? "one change" : `${problems.length} changes`}:</p>
      <ul className="mt-1 flex flex-col gap-2">
        {problems.map((p) => (
          <li key={p.change.key} className="flex flex-wrap items-center justify-between gap-2">
            <span>
              {p.result.status === "conflict" ? "Changed by the office meanwhile: " : "Refused: "}
              {p.result.message ?? p.change.kind}
            </span>
            <button type="button" className="min-h-11 rounded-lg border-2 border-line bg-card px-3 font-semibold" onClick={async () => outbox && (await outbox.dismissProblem(p.change.key), refresh(outbox))}>
              Dismiss
            </button>
          </li>
        ))}
      </ul>
    </div>
    ) : null}
    </>
  ) : null;

  if (stop) {
    return (
      <>
        {statusBar}
        {problemList}
        <StopView
          stop={stop}
          number={run.stops.indexOf(stop) + 1}
          settings={run.settings}
          serviceDate={run.serviceDate}
          onBack={() => setOpenStop(null)}
          onSupers={() => record({ kind: "supers", payload: { visitId: stop.visitId } } as FieldChange)}
          onTally={(tally: FieldTally) => record({ kind: "tally", payload: { ...tally, visitId: stop.visitId, recordedAt: new Date().toISOString() } } as FieldChange)}
          onAirTemp={(airTempC) => record({ kind: "air_temp", payload: { visitId: stop.visitId, airTempC } } as FieldChange)}
          doseAboveLabel={run.doseAboveLabel ?? []}
          onFinish={(weatherNote) => record({ kind: "finish", payload: { visitId: stop.visitId, weatherNote, notes: null } } as FieldChange)}
        />
        <SafetyCautions audience="crew" className="mt-6" />
      </>
    );
  }

  const grams = totals.reduce((sum, t, i) => sum + run.stops[i].colonies.reduce((g, c) => g + c.doseGrams, 0), 0);
  return (
    <>
      <h1 className="text-2xl font-bold">{title}</h1>
      <p className="mb-3 text-lg text-ink-soft">
        {run.crewName} · {formatServiceDate(run.serviceDate)}
      </p>
      {statusBar}
      {problemList}
      <div className="mb-3 grid grid-cols-2 gap-2 text-lg">
        <p className="rounded-lg border border-line bg-card p-3">
          <span className="block text-sm font-semibold text-ink-soft">Acid to carry</span>
          <strong>{formatDose(Math.round(grams * 100) / 100, run.settings.unitSystem)}</strong>
        </p>
        <p className="rounded-lg border border-line bg-card p-3">
          <span className="block text-sm font-semibold text-ink-soft">Driving</span>
          <strong>
            {formatDistance(run.driveMeters, run.settings.unitSystem)} · {formatDuration(Math.round(run.driveSeconds / 60))}
          </strong>
        </p>
        <p className="col-span-2 rounded-lg border border-line bg-card p-3">
          <span className="block text-sm font-semibold text-ink-soft">Vaporizer</span>
          Block {formatTemperature(run.settings.blockMinC, run.settings.unitSystem)}–{formatTemperature(run.settings.blockMaxC, run.settings.unitSystem)} · about {run.settings.sublimationSeconds} s a dose · entrance closed {run.settings.entranceClosedMinutes} min
        </p>
      </div>
      {!run.safetyChecked ? <SafetyCheck onConfirm={(items: SafetyItems) => record({ kind: "safety", payload: { runId: run.runId, items } } as FieldChange)} /> : null}
      <ol className="flex flex-col gap-3" aria-label="Stops in order">
        {run.stops.map((s, i) => {
          const t = totals[i];
          return (
            <li key={s.visitId}>
              <button
                type="button"
                disabled={!run.safetyChecked}
                onClick={() => setOpenStop(s.visitId)}
                className={`flex w-full items-start gap-3 rounded-xl border-2 p-4 text-left ${s.status === "done" ? "border-pine-700 bg-pine-50" : "border-line bg-card"} disabled:opacity-60`}
              >
                <span className="flex h-12 w-12 shrink-0 items-center justify-center rounded-full bg-pine-700 text-xl font-bold text-white" aria-hidden="true">
                  {s.status === "done" ? "✓" : i + 1}
                </span>
                <span className="min-w-0 flex-1">
                  <span className="block text-xl font-bold">
                    <span className="sr-only">Stop {i + 1}: </span>
                    {s.yardName}
                  </span>
                  <span className="block text-lg">
                    arrive {s.arrive} · {s.colonies.length} colonies · {formatDose(s.colonies.reduce((g, c) => g + c.doseGrams, 0), run.settings.unitSystem)}
                  </span>
                  <span className="block font-semibold text-ink-soft">
                    {s.status === "done" ? `Finished: ${t.treated} treated, ${t.skipped} skipped` : t.tallied ? `${t.tallied} of ${t.colonies} recorded` : s.customerName}
                  </span>
                </span>
              </button>
            </li>
          );
        })}
      </ol>
      <SafetyCautions audience="crew" className="mt-6" />
    </>
  );
}
