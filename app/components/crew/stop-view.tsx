import { useState } from "react";
import { airTemperatureWarning } from "~/domain/treatment-guards";
import { formatDose } from "~/domain/units";
import { formatServiceDate } from "../format";
import { celsiusForDisplay, temperatureUnit, typedAirTempToCelsius, AIR_TEMP_MAX_C, AIR_TEMP_MIN_C } from "./air-temperature";
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
  onAirTemp,
  doseAboveLabel = [],
  onFinish,
}: {
  stop: FieldStop;
  number: number;
  settings: FieldSettings;
  serviceDate: string;
  onBack: () => void;
  onSupers: () => void;
  onTally: (tally: FieldTally) => void;
  onAirTemp?: (airTempC: number) => void;
  doseAboveLabel?: { label: string; grams: number }[];
  onFinish: (weatherNote: string | null) => void;
}) {
  const totals = stopTotals(stop);
  const blocker = finishBlocker(stop);
  const [weather, setWeather] = useState("");
  const unit = temperatureUnit(settings.unitSystem);
  const [airTemp, setAirTemp] = useState(stop.airTempC == null ? "" : String(celsiusForDisplay(stop.airTempC, settings.unitSystem)));
  const [airTempError, setAirTempError] = useState<string | null>(null);
  const band = settings.airTempMinC !== undefined && settings.airTempMaxC !== undefined ? { airTempMinC: settings.airTempMinC, airTempMaxC: settings.airTempMaxC } : null;
  const airTempWarning = stop.airTempC != null && band ? airTemperatureWarning(stop.airTempC, band, settings.unitSystem) : null;
  function saveAirTemp() {
    if (!airTemp.trim()) return;
    const celsius = typedAirTempToCelsius(airTemp, settings.unitSystem);
    if (celsius === null || celsius < AIR_TEMP_MIN_C || celsius > AIR_TEMP_MAX_C) {
      setAirTempError(`Enter the air temperature as a number from ${celsiusForDisplay(AIR_TEMP_MIN_C, settings.unitSystem)} to ${celsiusForDisplay(AIR_TEMP_MAX_C, settings.unitSystem)} ${unit}.`);
      return;
    }
    setAirTempError(null);
    if (celsius !== stop.airTempC) onAirTemp?.(celsius);
  }
  const done = stop.status === "done";
  const broodFoundInBroodlessCourse = stop.roundsPlanned === 1 && Object.values(stop.tallies).some((t) => t.broodSeen === true);
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

      {doseAboveLabel.length ? (
        <div role="note" className="mt-3 rounded-xl border-2 border-ochre-500 bg-ochre-100 p-3">
          <p className="text-lg font-bold">
            The dose rate for {doseAboveLabel.map((d) => `${d.label.toLowerCase()} boxes (${d.grams} g)`).join(" and ")} is above the label maximum; the owner confirmed their
            label allows it.
          </p>
        </div>
      ) : null}

      {onAirTemp ? (
        <div className="mt-3 rounded-xl border-2 border-line bg-card p-3">
          <label className="flex flex-col text-lg font-semibold">
            Air temperature at the yard ({unit})
            <span className="mt-1 flex gap-2">
              <input
                inputMode="decimal"
                value={airTemp}
                disabled={done}
                onChange={(e) => setAirTemp(e.target.value)}
                onBlur={saveAirTemp}
                aria-invalid={airTempError ? true : undefined}
                aria-describedby="air-temp-note"
                className="min-h-11 w-full rounded-lg border-2 border-line px-3 text-xl"
              />
              <button type="button" disabled={done} onClick={saveAirTemp} className="min-h-11 rounded-lg bg-pine-700 px-4 font-bold text-white disabled:opacity-50">
                Save
              </button>
            </span>
          </label>
          <p id="air-temp-note" className={airTempError || airTempWarning ? "mt-1 font-semibold text-alarm-700" : "mt-1 text-ink-soft"}>
            {airTempError ?? airTempWarning ?? (stop.airTempC != null ? `Recorded: ${celsiusForDisplay(stop.airTempC, settings.unitSystem)} ${unit}` : "")}
          </p>
        </div>
      ) : null}

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
            locked={!stop.supersConfirmed}
            lockedReason={done ? null : !stop.supersConfirmed ? "Treated is blocked: confirm the supers are off first. A colony with a super on can be skipped now." : null}
            done={done}
            onChange={onTally}
          />
        ))}
      </ol>

      <div className="mt-4 rounded-xl border-2 border-pine-700 bg-card p-3">
        <h2 className="text-xl font-bold">{done ? "Visit finished" : "Finish the visit"}</h2>
        <p className="text-lg">
          {totals.treated} treated · {totals.skipped} skipped · {formatDose(totals.grams, settings.unitSystem)} applied
        </p>
        {done && (stop.roundsAdded ?? 0) > 0 ? (
          <p className="mt-2 rounded-lg bg-ochre-100 px-3 py-2 font-bold" role="status" data-testid="rounds-added">
            Brood found: {stop.roundsAdded} more {stop.roundsAdded === 1 ? "round" : "rounds"} added to this course
            {stop.nextRoundDate ? `; round ${stop.roundNumber + 1} on ${formatServiceDate(stop.nextRoundDate)}` : ""}. The customer is told in the visit report.
          </p>
        ) : null}
        {!done && broodFoundInBroodlessCourse ? (
          <p className="mt-2 rounded-lg bg-ochre-100 px-3 py-2 font-semibold">
            Brood seen in a course planned without brood: finishing adds the rounds of a course with brood and books the next round.
          </p>
        ) : null}
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
