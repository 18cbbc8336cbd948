import { useState } from "react";
// Plain modules only: the crew's page runs under a policy without eval, which zod's schemas would try.
import { BOX_TYPES, BOX_TYPE_LABELS, MAX_BROOD_BOXES, MIN_BROOD_BOXES, type BoxType } from "~/domain/box-types";
import { HALF_US_CUP_ML, MAX_SAMPLE_ML, MIN_SAMPLE_ML, assessMiteLoad, beesFromSampleVolume, formatMitesPer100 } from "~/domain/mites";
import { formatDose, roundTo } from "~/domain/units";
import { DoseTimer } from "./dose-timer";
import { SKIP_REASON_NAMES, type FieldColony, type FieldSettings, type FieldTally, type SkipReason } from "./field-types";

const BIG = "min-h-12 rounded-lg border-2 px-4 text-lg font-bold";
const STEP = "min-h-11 min-w-11 rounded-lg border-2 border-line bg-card px-3 text-xl font-bold disabled:opacity-50";

type Findings = { broodBoxes: number; boxType: BoxType; broodSeen: boolean | null };

/**
 * What the crew found at the hive — brood boxes, box type, brood seen — sent with the colony's
 * tally. Big targets: steppers and a select, for gloved hands.
 */
function HiveFindings({ label, findings, disabled, onChange }: { label: string; findings: Findings; disabled: boolean; onChange: (next: Findings) => void }) {
  const set = (patch: Partial<Findings>) => onChange({ ...findings, ...patch });
  const seen: { value: boolean | null; name: string }[] = [
    { value: true, name: "Brood" },
    { value: false, name: "No brood" },
    { value: null, name: "Not looked" },
  ];
  return (
    <fieldset className="mt-2 flex flex-col gap-2 rounded-lg border-2 border-line p-2" data-findings={label} disabled={disabled}>
      <legend className="px-1 font-semibold">What you found in {label}</legend>
      <div className="flex flex-wrap items-center gap-2">
        <span className="font-semibold" id={`boxes-${label}`}>
          Brood boxes
        </span>
        <button type="button" className={STEP} aria-label={`One brood box fewer in ${label}`} disabled={findings.broodBoxes <= MIN_BROOD_BOXES} onClick={() => set({ broodBoxes: findings.broodBoxes - 1 })}>
          −
        </button>
        <output aria-labelledby={`boxes-${label}`} className="min-w-8 text-center text-xl font-bold">
          {findings.broodBoxes}
        </output>
        <button type="button" className={STEP} aria-label={`One brood box more in ${label}`} disabled={findings.broodBoxes >= MAX_BROOD_BOXES} onClick={() => set({ broodBoxes: findings.broodBoxes + 1 })}>
          +
        </button>
      </div>
      <label className="flex flex-col font-semibold">
        Box type
        <select value={findings.boxType} onChange={(e) => set({ boxType: e.target.value as BoxType })} className="min-h-11 rounded-lg border-2 border-line bg-card px-3 text-lg">
          {BOX_TYPES.map((t) => (
            <option key={t} value={t}>
              {BOX_TYPE_LABELS[t]}
            </option>
          ))}
        </select>
      </label>
      <div role="group" aria-label={`Brood seen in ${label}`} className="grid grid-cols-3 gap-2">
        {seen.map((s) => (
          <button
            key={String(s.value)}
            type="button"
            aria-pressed={findings.broodSeen === s.value}
            onClick={() => set({ broodSeen: s.value })}
            className={`min-h-11 rounded-lg border-2 px-2 font-semibold ${findings.broodSeen === s.value ? "border-pine-800 bg-pine-700 text-white" : "border-line bg-card"}`}
          >
            {s.name}
          </button>
        ))}
      </div>
    </fieldset>
  );
}

/** One colony's tally: treated or skipped (with a reason), an optional wash count, notes. */
export function ColonyRow({
  colony,
  tally,
  settings,
  serviceDate,
  locked,
  lockedReason,
  done,
  onChange,
}: {
  colony: FieldColony;
  tally: FieldTally | undefined;
  settings: FieldSettings;
  serviceDate: string;
  /** Treated is blocked (the supers are not confirmed off); skipping stays open. */
  locked: boolean;
  lockedReason: string | null;
  /** The visit is finished: nothing in the row can change any more. */
  done: boolean;
  onChange: (tally: FieldTally) => void;
}) {
  const [showWash, setShowWash] = useState(tally?.mites != null);
  // "Skipped" asks for the reason first; the tally is kept once there is one (and, for
  // "other", a note), so nothing half-done is ever sent.
  const [skipping, setSkipping] = useState(false);
  const [otherNote, setOtherNote] = useState(tally?.skipNote ?? "");
  const [otherPicked, setOtherPicked] = useState(false);
  const showSkip = skipping || tally?.outcome === "skipped";
  const currentReason = tally?.outcome === "skipped" ? tally.skipReason : null;
  const [mitesText, setMitesText] = useState(tally?.mites != null ? String(tally.mites) : "");
  const [beesText, setBeesText] = useState(tally?.beesSampled != null ? String(tally.beesSampled) : "");
  const [mlText, setMlText] = useState(tally?.sampleMl != null ? String(tally.sampleMl) : "");
  // A wash count is kept when the mites and either the bees counted or the sample's volume are
  // in (or all are cleared); with only the volume, the server estimates the bees from settings.
  const washInput = (ml = mlText) => {
    const mites = mitesText.trim() === "" ? null : Math.max(0, Math.round(Number(mitesText)));
    const bees = beesText.trim() === "" ? null : Math.max(1, Math.round(Number(beesText)));
    const volume = ml.trim() === "" ? null : roundTo(Number(ml), 1);
    const volumeOutOfRange = volume !== null && !(volume >= MIN_SAMPLE_ML && volume <= MAX_SAMPLE_ML);
    const complete = !volumeOutOfRange && (mites === null ? bees === null && volume === null : bees !== null || volume !== null);
    return { mites, bees, volume, complete, volumeOutOfRange };
  };
  const saveWash = (ml = mlText) => {
    const { mites, bees, volume, complete } = washInput(ml);
    if (!complete) return;
    if (mites === (tally?.mites ?? null) && bees === (tally?.beesSampled ?? null) && volume === (tally?.sampleMl ?? null)) return;
    save({ mites, beesSampled: bees, sampleMl: volume, estimatedBees: null });
  };
  const washCheck = washInput();
  const washHalf = !washCheck.complete;
  const base: FieldTally = tally ?? { colonyLabel: colony.label, outcome: "treated", skipReason: null, skipNote: null, mites: null, beesSampled: null, sampleMl: null, notes: null };
  // Findings go into the tally sent: given now, or kept until the colony is tallied.
  const [showFindings, setShowFindings] = useState(false);
  const recordBoxType: BoxType = colony.boxType ?? "deep";
  const [findings, setFindings] = useState<Findings>({
    broodBoxes: tally?.broodBoxes ?? Math.min(Math.max(colony.broodBoxes, MIN_BROOD_BOXES), MAX_BROOD_BOXES),
    boxType: tally?.boxType ?? recordBoxType,
    broodSeen: tally?.broodSeen ?? null,
  });
  const corrections = (f: Findings): Partial<FieldTally> => ({
    broodBoxes: f.broodBoxes !== colony.broodBoxes ? f.broodBoxes : (tally?.broodBoxes ?? null),
    boxType: f.boxType !== recordBoxType ? f.boxType : (tally?.boxType ?? null),
    broodSeen: f.broodSeen,
  });
  const save = (patch: Partial<FieldTally>) => onChange({ ...base, ...corrections(findings), ...patch });
  const changeFindings = (next: Findings) => {
    setFindings(next);
    if (tally) onChange({ ...tally, ...corrections(next) });
  };
  const corrected = findings.broodBoxes !== colony.broodBoxes || findings.boxType !== recordBoxType || findings.broodSeen !== null;
  // Bees counted win; otherwise the estimate from the volume, as the server makes it.
  const estimatedBees =
    tally?.beesSampled == null && tally?.sampleMl != null
      ? (tally.estimatedBees ?? (settings.beesPer100Ml ? beesFromSampleVolume(tally.sampleMl, settings.beesPer100Ml) : null))
      : null;
  // The office's estimate when the wash was recorded stands; a wash changed here is estimated at today's setting, as the server will.
  const estimatedWhenRecorded = tally?.beesSampled == null && tally?.estimatedBees != null;
  const washBees = tally?.beesSampled ?? estimatedBees;
  const assessment = tally?.mites != null && washBees != null && washBees > 0 ? assessMiteLoad(tally.mites, washBees, serviceDate, settings.miteThresholds) : null;
  const halfCupMl = roundTo(HALF_US_CUP_ML, 1);
  // The server refuses one more treated tally too; this keeps the crew from tapping it.
  const atSeasonCap = colony.applicationCap !== undefined && colony.applicationsBefore !== undefined && colony.applicationsBefore >= colony.applicationCap;
  return (
    <li className={`rounded-xl border-2 p-3 ${tally ? (tally.outcome === "treated" ? "border-pine-700 bg-pine-50" : "border-ochre-500 bg-ochre-100") : "border-line bg-card"}`} data-colony={colony.label}>
      <fieldset disabled={done} className="m-0 min-w-0 border-0 p-0">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <p className="text-xl font-bold">
          {colony.label}
          <span className="ml-2 text-base font-semibold text-ink-soft">
            {colony.broodBoxes} brood box{colony.broodBoxes === 1 ? "" : "es"} → {formatDose(colony.doseGrams, settings.unitSystem)}
          </span>
        </p>
        {tally ? <span className="font-bold">{tally.outcome === "treated" ? "Treated ✓" : `Skipped: ${tally.skipReason ? SKIP_REASON_NAMES[tally.skipReason] : "reason?"}`}</span> : null}
      </div>
      {colony.boxTypeLabel || colony.doseAssumption ? (
        <p className="text-ink-soft">
          {colony.boxTypeLabel ? <span className="font-semibold">{colony.boxTypeLabel}. </span> : null}
          {colony.doseAssumption ?? null}
        </p>
      ) : null}
      {colony.applicationCap !== undefined && colony.applicationsBefore !== undefined ? (
        <p className={atSeasonCap ? "font-semibold text-alarm-700" : "text-ink-soft"}>
          Applications this season before today: {colony.applicationsBefore} of {colony.applicationCap}
        </p>
      ) : null}
      <div className="mt-2 grid grid-cols-2 gap-2">
        <button
          type="button"
          disabled={locked || (atSeasonCap && tally?.outcome !== "treated")}
          aria-pressed={tally?.outcome === "treated"}
          onClick={() => {
            setSkipping(false);
            save({ outcome: "treated", skipReason: null, skipNote: null });
          }}
          className={`${BIG} ${tally?.outcome === "treated" ? "border-pine-800 bg-pine-700 text-white" : "border-pine-700 bg-card text-pine-800"} disabled:opacity-50`}
        >
          Treated <span className="sr-only">{colony.label}</span>
        </button>
        <button
          type="button"
          aria-pressed={showSkip}
          onClick={() => setSkipping(true)}
          className={`${BIG} ${showSkip ? "border-ochre-700 bg-ochre-500 text-ink" : "border-ochre-700 bg-card text-ochre-700"}`}
        >
          Skipped <span className="sr-only">{colony.label}</span>
        </button>
      </div>
      {locked && lockedReason ? <p className="mt-1 text-sm font-semibold text-alarm-700">{lockedReason}</p> : null}
      {atSeasonCap && tally?.outcome !== "treated" ? (
        <p className="mt-1 font-semibold text-alarm-700">
          {colony.label} has had the most applications the business allows this season. Skip it (reason Other) and tell the office.
        </p>
      ) : null}
      {showSkip ? (
        <div className="mt-2 flex flex-col gap-1">
          <label htmlFor={`reason-${colony.label}`} className="font-semibold">
            Why skipped
          </label>
          <select
            id={`reason-${colony.label}`}
            value={currentReason ?? ""}
            onChange={(e) => {
              const reason = (e.target.value || null) as SkipReason | null;
              if (reason && reason !== "other") save({ outcome: "skipped", skipReason: reason, skipNote: null });
              else if (reason === "other" && otherNote.trim()) save({ outcome: "skipped", skipReason: "other", skipNote: otherNote.trim() });
              else if (reason === "other") setOtherPicked(true);
            }}
            aria-invalid={!currentReason ? true : undefined}
            className="min-h-12 rounded-lg border-2 border-line bg-card px-3 text-lg"
          >
            <option value="">Choose a reason</option>
            {Object.entries(SKIP_REASON_NAMES).map(([value, name]) => (
              <option key={value} value={value}>
                {name}
              </option>
            ))}
          </select>
          {currentReason === "other" || otherPicked ? (
            <label className="mt-1 flex flex-col font-semibold">
              What was wrong
              <input
                value={otherNote}
                onChange={(e) => setOtherNote(e.target.value)}
                onBlur={() => otherNote.trim() && otherNote.trim() !== (tally?.skipNote ?? "") && save({ outcome: "skipped", skipReason: "other", skipNote: otherNote.trim() })}
                className="min-h-12 rounded-lg border-2 border-line bg-card px-3"
              />
            </label>
          ) : null}
          {!currentReason ? <p className="text-sm font-semibold text-ochre-700">Choose a reason to record the colony as skipped.</p> : null}
        </div>
      ) : null}
      <div className="mt-2 flex flex-wrap gap-2">
        {tally?.outcome !== "skipped" ? <DoseTimer seconds={settings.sublimationSeconds} label={colony.label} /> : null}
        <button
          type="button"
          onClick={() => setShowFindings((v) => !v)}
          aria-expanded={showFindings}
          className={`min-h-11 rounded-lg border-2 px-3 font-semibold disabled:opacity-50 ${corrected ? "border-pine-700 bg-pine-50" : "border-line bg-card"}`}
        >
          Correct boxes / brood <span className="sr-only">for {colony.label}</span>
        </button>
        <button type="button" disabled={!tally} onClick={() => setShowWash((v) => !v)} aria-expanded={showWash} className="min-h-12 rounded-lg border-2 border-line bg-card px-3 font-semibold disabled:opacity-50">
          {showWash ? "Hide wash count" : "Add wash count"} <span className="sr-only">for {colony.label}</span>
        </button>
      </div>
      {showFindings ? <HiveFindings label={colony.label} findings={findings} disabled={done} onChange={changeFindings} /> : null}
      {!showFindings && findings.broodSeen !== null ? (
        <p className="mt-1 font-semibold text-ink-soft">{findings.broodSeen ? "Brood seen" : "No brood seen"}</p>
      ) : null}
      {showWash && tally ? (
        <div className="mt-2 grid grid-cols-2 gap-2" data-wash={colony.label}>
          <label className="flex flex-col font-semibold">
            Mites counted
            <input
              type="number"
              inputMode="numeric"
              min={0}
              value={mitesText}
              onChange={(e) => setMitesText(e.target.value)}
              onBlur={() => saveWash()}
              className="min-h-12 rounded-lg border-2 border-line bg-card px-3 text-lg"
            />
          </label>
          <label className="flex flex-col font-semibold">
            Bees sampled
            <input
              type="number"
              inputMode="numeric"
              min={1}
              value={beesText}
              onChange={(e) => setBeesText(e.target.value)}
              onBlur={() => saveWash()}
              className="min-h-12 rounded-lg border-2 border-line bg-card px-3 text-lg"
            />
          </label>
          <label className="col-span-2 flex flex-col font-semibold">
            Or the sample volume (mL), when the bees were not counted
            <span className="flex gap-2">
              <input
                type="number"
                inputMode="decimal"
                min={MIN_SAMPLE_ML}
                max={MAX_SAMPLE_ML}
                step={0.1}
                value={mlText}
                onChange={(e) => setMlText(e.target.value)}
                onBlur={() => saveWash()}
                className="min-h-12 min-w-0 flex-1 rounded-lg border-2 border-line bg-card px-3 text-lg"
              />
              <button
                type="button"
                onClick={() => {
                  setMlText(String(halfCupMl));
                  saveWash(String(halfCupMl));
                }}
                className="min-h-12 rounded-lg border-2 border-line bg-card px-3 font-semibold"
              >
                Half cup ({halfCupMl} mL)
              </button>
            </span>
          </label>
          {washHalf ? (
            <p className="col-span-2 text-sm font-semibold text-ochre-700">
              {washCheck.volumeOutOfRange
                ? `Enter the sample volume from ${MIN_SAMPLE_ML} to ${MAX_SAMPLE_ML} mL.`
                : "Enter the mites and either the bees sampled or the sample volume."}
            </p>
          ) : null}
          {estimatedBees !== null ? (
            <p className="col-span-2 text-sm font-semibold text-ink-soft">
              {estimatedWhenRecorded
                ? `About ${estimatedBees} bees, estimated from ${tally.sampleMl} mL when the wash was recorded.`
                : `About ${estimatedBees} bees, estimated from ${tally.sampleMl} mL at ${settings.beesPer100Ml} bees per 100 mL (settings).`}
            </p>
          ) : null}
          {assessment ? (
            <p className={`col-span-2 rounded-lg px-3 py-2 font-bold ${assessment.level === "below" ? "bg-pine-50 text-pine-900" : "bg-alarm-100 text-alarm-700"}`} role="status">
              {formatMitesPer100(assessment.mitesPer100)} mites per 100 bees{estimatedBees !== null ? " (bees estimated)" : ""} —{" "}
              {assessment.level === "below" ? "below" : assessment.level === "at" ? "at" : "above"} the threshold of {formatMitesPer100(assessment.threshold)}
            </p>
          ) : null}
        </div>
      ) : null}
      {tally ? (
      <label className="mt-2 flex flex-col font-semibold">
        Notes <span className="sr-only">for {colony.label}</span>
        <input defaultValue={tally?.notes ?? ""} onBlur={(e) => (e.target.value !== (tally?.notes ?? "") ? save({ notes: e.target.value || null }) : undefined)} className="min-h-12 rounded-lg border-2 border-line bg-card px-3" />
      </label>
      ) : null}
      </fieldset>
    </li>
  );
}
