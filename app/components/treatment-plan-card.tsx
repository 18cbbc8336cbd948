import type { YardTreatmentPlan } from "~/domain/treatment-plan";
import { formatDose, formatDuration, formatTemperature, type UnitSystem } from "~/domain/units";
import { Card } from "./ui/card";
import { formatServiceDate, visitStatusName } from "./format";

/** "2 medium brood boxes × 0.7 g, in 1 vaporizer load": how the dose per colony was worked out. */
function doseWorking(plan: YardTreatmentPlan, rate: string): string {
  const boxes = plan.broodBoxesPerColony;
  const type = plan.boxType === "nuc" ? "nuc" : plan.boxType;
  const loads = `${plan.loadsPerColony} vaporizer ${plan.loadsPerColony === 1 ? "load" : "loads"}`;
  return `${boxes} ${type} brood ${boxes === 1 ? "box" : "boxes"} × ${rate}, in ${loads}`;
}

/** The yard's treatment plan: doses, rounds with dates, time at the yard, vaporizer band. */
export function TreatmentPlanCard({ plan, unitSystem, doseRate }: { plan: YardTreatmentPlan; unitSystem: UnitSystem; doseRate: number }) {
  return (
    <Card title="Treatment plan">
      <dl className="grid grid-cols-1 gap-x-6 gap-y-3 sm:grid-cols-2">
        <div>
          <dt className="text-sm font-semibold text-ink-soft">{plan.crewFindings ? "Dose per colony, on average" : "Dose per colony"}</dt>
          <dd className="text-lg font-bold" data-testid="dose-per-colony">
            {formatDose(plan.dosePerColonyGrams, unitSystem)}
          </dd>
          {plan.crewFindings ? (
            <>
              <dd className="text-sm text-ink-soft" data-testid="dose-working">
                oxalic acid dihydrate, by each colony&apos;s brood boxes at the box type&apos;s rate
              </dd>
              <dd className="mt-1 rounded-lg border-l-4 border-ochre-500 bg-ochre-100 px-3 py-2 text-sm" data-testid="crew-findings">
                {plan.crewFindings}
              </dd>
            </>
          ) : (
            <dd className="text-sm text-ink-soft" data-testid="dose-working">
              oxalic acid dihydrate: {doseWorking(plan, formatDose(doseRate, unitSystem))}
            </dd>
          )}
        </div>
        <div>
          <dt className="text-sm font-semibold text-ink-soft">Dose per round, whole yard</dt>
          <dd className="text-lg font-bold" data-testid="dose-per-round">
            {formatDose(plan.dosePerRoundGrams, unitSystem)}
          </dd>
          <dd className="text-sm text-ink-soft">= {formatDose(plan.anhydrousPerRoundGrams, unitSystem)} as anhydrous oxalic acid</dd>
        </div>
        <div>
          <dt className="text-sm font-semibold text-ink-soft">Acid for the whole course</dt>
          <dd className="text-lg font-bold" data-testid="dose-for-course">
            {formatDose(plan.doseForCourseGrams, unitSystem)}
          </dd>
        </div>
        <div>
          <dt className="text-sm font-semibold text-ink-soft">Time at the yard per round</dt>
          <dd className="text-lg font-bold" data-testid="service-time">
            {formatDuration(plan.serviceMinutesPerRound)}
          </dd>
          <dd className="text-sm text-ink-soft">
            with {plan.vaporizers} vaporizer{plan.vaporizers === 1 ? "" : "s"}, block at {formatTemperature(plan.blockBand.minC, unitSystem)}–
            {formatTemperature(plan.blockBand.maxC, unitSystem)}
          </dd>
        </div>
      </dl>
      <h3 className="mt-4 font-bold">{plan.roundsBooked ? "Rounds booked" : "Rounds if treated from the next visit"}</h3>
      <ol className="mt-2 flex flex-wrap gap-2" aria-label="Treatment rounds">
        {plan.rounds.map((round) => (
          <li key={round.roundNumber} className="rounded-lg border border-line bg-paper px-3 py-2">
            <span className="block text-sm font-semibold">Round {round.roundNumber}</span>
            <span className="block">{formatServiceDate(round.date)}</span>
            {plan.roundsBooked ? <span className="block text-sm text-ink-soft">{visitStatusName(round.status)}</span> : null}
          </li>
        ))}
      </ol>
      {plan.blockBandProblems.length ? (
        <ul className="mt-3 list-disc pl-5 text-sm text-alarm-700">
          {plan.blockBandProblems.map((p) => (
            <li key={p.message}>{p.message}</li>
          ))}
        </ul>
      ) : null}
    </Card>
  );
}
