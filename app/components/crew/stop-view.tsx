import { useState } from "react";
import { formatDose } from "~/domain/units";
import { ColonyRow } from "./colony-row";
import { finishBlocker, stopTotals } from "./field-state";
import type { FieldSettings, FieldStop, FieldTally } from "./field-types";

const BIG = "min-h-14 w-full rounded-xl px-4 text-xl font-bold";

/** One stop on the phone: how to get there and in, supers check, a row per colony, finish. */
export function StopView({
  stop,
  number,
  settings,
  serviceDate,
  onBack,
  onSupers,
  onTally,
  onFinish,
}: {
  stop: FieldStop;
  number: number;
  settings: FieldSettings;
  serviceDate: string;
  onBack: () => void;
  onSupers: () => void;
  onTally: (tally: FieldTally) => void;
  onFinish: (weatherNote: string | null) => void;
}) {
  const totals = stopTotals(stop);
  const blocker = finishBlocker(stop);
  const [weather, setWeather] = useState("");
  const done = stop.status === "done";
  const geo = `geo:${stop.lat},${stop.lng}?q=${stop.lat},${stop.lng}(${encodeURIComponent(stop.yardName)})`;
  return (
    <section aria-labelledby="stop-title">
      <button type="button" onClick={onBack} className="mb-3 min-h-12 rounded-lg border-2 border-line bg-card px-4 font-bold">
        ← All stops
      </button>
      <h1 id="stop-title" className="text-2xl font-bold">
        {number}. {stop.yardName}
      </h1>
      <p className="text-lg">
        {stop.customerName} · arrive {stop.arrive} · round {stop.roundNumber} of {stop.roundsPlanned}
      </p>
      <div className="mt-3 grid grid-cols-2 gap-2">
        <a href={geo} className="flex min-h-12 items-center justify-center rounded-lg bg-pine-700 px-3 font-bold text-white">
          Directions
        </a>
        {stop.customerPhone ? (
          <a href={`tel:${stop.customerPhone}`} className="flex min-h-12 items-center justify-center rounded-lg border-2 border-pine-700 bg-card px-3 font-bold text-pine-800">
            Call {stop.customerName.split(" ")[0]}
          </a>
        ) : null}
      </div>
      <div className="mt-3 rounded-xl border-2 border-line bg-card p-3">
        <h2 className="font-bold">Getting in</h2>
        <p className="text-lg whitespace-pre-line">{stop.accessNotes || "No access notes."}</p>
        {stop.address ? <p className="mt-1 text-ink-soft">{stop.address}</p> : null}
        {stop.photoIds.length ? (
          <ul className="mt-2 grid grid-cols-3 gap-2" aria-label="Photos of the yard">
            {stop.photoIds.map((id) => (
              <li key={id}>
                <img src={`/api/attachments/${id}`} alt={`Photo ${id} of ${stop.yardName}`} className="aspect-square w-full rounded-lg border border-line object-cover" />
              </li>
            ))}
          </ul>
        ) : null}
      </div>

      <div className={`mt-3 rounded-xl border-2 p-3 ${stop.supersConfirmed ? "border-pine-700 bg-pine-50" : "border-alarm-700 bg-alarm-100"}`}>
        {stop.supersConfirmed ? (
          <p className="text-lg font-bold">Honey supers are off ✓</p>
        ) : (
          <>
            <p className="text-lg font-bold">Check the honey supers first</p>
            <p>Treatment is blocked until you confirm no honey super for people to eat is on any hive here (unless the product label allows it).</p>
            <button type="button" onClick={onSupers} disabled={done} className={`${BIG} mt-2 bg-alarm-700 text-white`}>
              Supers are off — start treating
            </button>
          </>
        )}
      </div>

      <h2 className="mt-4 text-xl font-bold">
        Colonies ({totals.tallied} of {totals.colonies} recorded)
      </h2>
      <ol className="mt-2 flex flex-col gap-3" aria-label="Colonies to tally">
        {stop.colonies.map((colony) => (
          <ColonyRow
            key={colony.label}
            colony={colony}
            tally={stop.tallies[colony.label]}
            settings={settings}
            serviceDate={serviceDate}
            locked={!stop.supersConfirmed || done}
            lockedReason={done ? null : !stop.supersConfirmed ? "Blocked: confirm the supers are off first." : null}
            onChange={onTally}
          />
        ))}
      </ol>

      <div className="mt-4 rounded-xl border-2 border-pine-700 bg-card p-3">
        <h2 className="text-xl font-bold">{done ? "Visit finished" : "Finish the visit"}</h2>
        <p className="text-lg">
          {totals.treated} treated · {totals.skipped} skipped · {formatDose(totals.grams, settings.unitSystem)} applied
        </p>
        {done ? null : (
          <>
            <label className="mt-2 flex flex-col font-semibold">
              Weather (optional, for the record)
              <input value={weather} onChange={(e) => setWeather(e.target.value)} className="min-h-12 rounded-lg border-2 border-line px-3" />
            </label>
            {blocker ? <p className="mt-2 font-semibold text-alarm-700">{blocker}</p> : null}
            <button type="button" disabled={Boolean(blocker)} onClick={() => onFinish(weather.trim() || null)} className={`${BIG} mt-2 bg-pine-700 text-white disabled:opacity-50`}>
              Finish visit
            </button>
          </>
        )}
      </div>
    </section>
  );
}
