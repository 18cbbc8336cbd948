import { useEffect, useState } from "react";
import { data, Form, Link, useFetcher, useNavigation } from "react-router";
import { crewColour } from "~/components/day-plan/crew-colours";
import { StopCard } from "~/components/day-plan/stop-card";
import { formatServiceDate } from "~/components/format";
import { YardMap } from "~/components/map/yard-map";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button, buttonClass } from "~/components/ui/button";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { addCalendarDays } from "~/domain/courses";
import { formatDistance, formatDose, formatDuration } from "~/domain/units";
import { dayActionSchema } from "~/forms/day-plan";
import { formValues } from "~/forms/field-errors";
import {
  dayPlanningData,
  DayPlanRefused,
  moveDeferredToNextDayWithRoom,
  moveStop,
  planServiceDay,
  publishRun,
  setStopLock,
} from "~/models/day-plan.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { VisitChangeRefused } from "~/models/visit-changes.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { dateParam, readForm } from "~/services/request.server";
import type { Route } from "./+types/day";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Day plan ${data?.day.date ?? ""} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const date = dateParam(params.date);
  const [day, settings] = await Promise.all([dayPlanningData(db, date), loadBusinessSettings(db)]);
  return { day, unitSystem: settings.unitSystem, map: mapConfig() };
}

type Answer = { ok: boolean; message: string; details?: string[] };

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const date = dateParam(params.date);
  const parsed = dayActionSchema.safeParse(formValues(await readForm(request)));
  if (!parsed.success) return data<Answer>({ ok: false, message: parsed.error.issues[0].message }, { status: 400 });
  const input = parsed.data;
  try {
    switch (input.intent) {
      case "plan": {
        const summary = await planServiceDay(db, { date, actorUserId: user.id, keepLocked: input.keepLocked, replanPublished: input.replanPublished });
        const details = [
          ...summary.crews.map((c) => `${c.crewName}: ${c.stops} stops, ${c.colonies} colonies${c.finishTime ? `, back by ${c.finishTime}` : ""}.`),
          ...summary.deferred.map((d) => `Deferred: ${d.yardName} (${d.colonies} colonies) — ${d.message}`),
          ...summary.messages,
          ...(summary.notice ? [summary.notice] : []),
        ];
        return { ok: true, message: `Planned ${summary.colonies} colonies on ${summary.crews.filter((c) => c.stops > 0).length} runs.`, details } satisfies Answer;
      }
      case "move": {
        const result = await moveStop(db, { date, visitId: input.visitId, toCrewId: input.toCrewId, toPosition: input.toPosition, actorUserId: user.id });
        const problems = result.issues.map((i) => i.message);
        return { ok: problems.length === 0, message: problems.length ? "Moved, but the new order breaks the plan:" : "Moved; times recomputed.", details: [...problems, ...result.messages] } satisfies Answer;
      }
      case "lock":
        await setStopLock(db, { visitId: input.visitId, locked: input.locked, actorUserId: user.id });
        return { ok: true, message: input.locked ? "Stop locked: re-planning keeps it with its crew and in its order." : "Stop unlocked." } satisfies Answer;
      case "publish": {
        const result = await publishRun(db, { runId: input.runId, actorUserId: user.id });
        return {
          ok: true,
          message: result.published ? `Published ${result.crewName}'s run; e-mailed ${result.recipients.join(", ") || "nobody (no members)"}.` : `${result.crewName}'s run was already published.`,
        } satisfies Answer;
      }
      case "next-day": {
        const result = await moveDeferredToNextDayWithRoom(db, { visitId: input.visitId, actorUserId: user.id });
        return result.ok ? ({ ok: true, message: `Moved to ${formatServiceDate(result.date)}; the customer is being e-mailed.` } satisfies Answer) : data<Answer>({ ok: false, message: result.message }, { status: 409 });
      }
    }
  } catch (error) {
    if (error instanceof DayPlanRefused || error instanceof VisitChangeRefused) return data<Answer>({ ok: false, message: error.message }, { status: 409 });
    throw error;
  }
}

const RUN_STATUS: Record<string, string> = { draft: "Draft", published: "Published", in_progress: "Under way", done: "Done" };

export default function DayPlan({ loaderData, actionData }: Route.ComponentProps) {
  const { day, unitSystem, map } = loaderData;
  const navigation = useNavigation();
  const fetcher = useFetcher<Answer>();
  const planning = navigation.state === "submitting" && navigation.formData?.get("intent") === "plan";
  const answer = (fetcher.data ?? actionData) as Answer | undefined;
  const [dragOver, setDragOver] = useState<number | null>(null);
  const [showProgress, setShowProgress] = useState(false);
  useEffect(() => {
    if (!planning) return setShowProgress(false);
    const t = setTimeout(() => setShowProgress(true), 300);
    return () => clearTimeout(t);
  }, [planning]);

  const crews = day.crews.filter((c) => c.active).map((c, i) => ({ ...c, colour: crewColour(i) }));
  const runsByCrew = new Map(day.runs.map((r) => [r.crewId, r]));
  const move = (visitId: number, toCrewId: number, toPosition: number) =>
    fetcher.submit({ intent: "move", visitId, toCrewId, toPosition }, { method: "post" });
  const lock = (visitId: number, locked: boolean) => fetcher.submit({ intent: "lock", visitId, locked: String(locked) }, { method: "post" });

  const markers = day.runs.flatMap((run) =>
    run.stops.map((stop, i) => ({ id: stop.visitId, lat: stop.lat, lng: stop.lng, title: `${run.crewName} stop ${i + 1}: ${stop.yardName}`, tone: "stop" as const, number: i + 1, popup: `${stop.arrive}–${stop.leave}, ${stop.colonies} colonies` })),
  );
  const unplannedMarkers = day.unplanned.map((v) => ({ id: `u${v.visitId}`, lat: v.lat, lng: v.lng, title: `Not on a run: ${v.yardName}`, tone: "selected" as const, popup: v.deferReason ?? "Not planned yet" }));
  const routes = day.runs
    .filter((run) => run.stops.length)
    .map((run) => ({
      id: String(run.runId),
      colour: crews.find((c) => c.crewId === run.crewId)?.colour ?? "#175a43",
      points: [[run.start.lat, run.start.lng], ...run.stops.map((s) => [s.lat, s.lng]), [run.end.lat, run.end.lng]] as [number, number][],
    }));
  const totalColonies = day.runs.reduce((s, r) => s + r.colonies, 0);
  const totalDrive = day.runs.reduce((s, r) => s + r.driveSeconds, 0);

  return (
    <>
      <PageHeader
        title={`Day plan: ${formatServiceDate(day.date)}`}
        subtitle="Plan which crew treats which yards and in what order, adjust, then publish each run to its crew."
        actions={
          <nav aria-label="Other days" className="flex flex-wrap items-center gap-2">
            <Link className={buttonClass("secondary")} to={`/dispatch/days/${addCalendarDays(day.date, -1)}`}>
              ← Previous day
            </Link>
            <Link className={buttonClass("secondary")} to={`/dispatch/days/${addCalendarDays(day.date, 1)}`}>
              Next day →
            </Link>
          </nav>
        }
      />
      <div className="mb-4 grid grid-cols-2 gap-3 lg:grid-cols-4">
        <Stat label="Visits on runs" value={day.runs.reduce((s, r) => s + r.stops.length, 0)} />
        <Stat label="Colonies on runs" value={totalColonies} />
        <Stat label="Not on a run" value={day.unplanned.length} tone={day.unplanned.length ? "attention" : "plain"} />
        <Stat label="Driving" value={formatDuration(Math.round(totalDrive / 60))} />
      </div>

      <Form method="post" className="mb-4 flex flex-wrap items-center gap-4 rounded-xl border border-line bg-card p-4">
        <input type="hidden" name="intent" value="plan" />
        <Button type="submit" disabled={planning}>
          {planning ? "Planning…" : day.runs.length ? "Re-plan the day" : "Plan the day"}
        </Button>
        <label className="flex min-h-11 items-center gap-2">
          <input type="checkbox" name="keepLocked" defaultChecked className="h-5 w-5 accent-pine-700" /> Keep locked stops
        </label>
        <label className="flex min-h-11 items-center gap-2">
          <input type="checkbox" name="replanPublished" className="h-5 w-5 accent-pine-700" /> Also re-plan published runs
        </label>
        {showProgress ? (
          <div role="status" className="flex items-center gap-2">
            <progress aria-label="Planning the day" className="h-3 w-40" />
            <span>Finding the best order for each crew…</span>
          </div>
        ) : null}
      </Form>

      {answer ? (
        <div className="mb-4" role={answer.ok ? "status" : "alert"}>
          <FormMessage tone={answer.ok ? "info" : "error"} message={answer.message} />
          {answer.details?.length ? (
            <ul className="mt-2 list-disc pl-6 text-sm">
              {answer.details.map((d) => (
                <li key={d}>{d}</li>
              ))}
            </ul>
          ) : null}
        </div>
      ) : null}

      <div className="grid gap-6 xl:grid-cols-5">
        <div className="min-w-0 xl:col-span-2">
          <YardMap
            markers={[...markers, ...unplannedMarkers]}
            routes={routes}
            height="clamp(20rem, 60vh, 40rem)"
            tileUrl={map.tileUrl}
            tileAttribution={map.attribution}
            label={`Map of ${day.runs.length} runs with ${markers.length} stops`}
            description="The same stops are listed beside the map."
            legend={
              <ul className="flex flex-col gap-1 text-sm">
                {crews.map((c) => (
                  <li key={c.crewId} className="flex items-center gap-2">
                    <span className="inline-block h-1.5 w-6 rounded" style={{ background: c.colour }} aria-hidden="true" />
                    {c.name}
                  </li>
                ))}
              </ul>
            }
          />
        </div>
        <div className="grid min-w-0 gap-4 md:grid-cols-2 xl:col-span-3">
          {crews.map((crew) => {
            const run = runsByCrew.get(crew.crewId);
            const editable = !run || run.status === "draft" || run.status === "published";
            const issuesFor = (visitId: number) => (run?.issues ?? []).filter((i) => i.visitId === visitId);
            const overrun = (run?.issues ?? []).filter((i) => i.visitId === null);
            return (
              <section
                key={crew.crewId}
                aria-labelledby={`crew-${crew.crewId}`}
                data-testid={`crew-${crew.crewId}`}
                onDragOver={(e) => {
                  if (!editable) return;
                  e.preventDefault();
                  setDragOver(crew.crewId);
                }}
                onDragLeave={() => setDragOver(null)}
                onDrop={(e) => {
                  e.preventDefault();
                  setDragOver(null);
                  const visitId = Number(e.dataTransfer.getData("text/plain"));
                  const target = (e.target as HTMLElement).closest("[data-position]");
                  const position = target ? Number(target.getAttribute("data-position")) : 999;
                  if (visitId) move(visitId, crew.crewId, position);
                }}
                className={`rounded-xl border-2 p-3 ${dragOver === crew.crewId ? "border-ochre-500 bg-ochre-100" : "border-line bg-paper"}`}
              >
                <header className="mb-2 flex flex-wrap items-center justify-between gap-2">
                  <h2 id={`crew-${crew.crewId}`} className="flex items-center gap-2 text-lg font-bold">
                    <span className="inline-block h-3 w-3 rounded-full" style={{ background: crew.colour }} aria-hidden="true" />
                    {crew.name}
                  </h2>
                  <span className="rounded bg-card px-2 py-1 text-sm font-semibold">{run ? RUN_STATUS[run.status] : "No run"}</span>
                </header>
                <p className="mb-2 text-sm text-ink-soft">
                  {crew.workStart}–{crew.workEnd} · {crew.vaporizers} vaporizer{crew.vaporizers === 1 ? "" : "s"} · from {crew.start.label}
                  {run?.stops.length ? (
                    <>
                      <br />
                      {run.colonies} colonies · {formatDose(run.grams, unitSystem)} · {formatDistance(run.driveMeters, unitSystem)}, {formatDuration(Math.round(run.driveSeconds / 60))} driving
                    </>
                  ) : null}
                </p>
                {overrun.map((i) => (
                  <p key={i.message} role="alert" className="mb-2 font-semibold text-alarm-700">
                    {i.message}
                  </p>
                ))}
                <ol className="flex flex-col gap-2" aria-label={`${crew.name}'s stops`}>
                  {(run?.stops ?? []).map((stop, i) => (
                    <StopCard
                      key={stop.visitId}
                      stop={stop}
                      number={i + 1}
                      colour={crew.colour}
                      issues={issuesFor(stop.visitId)}
                      unitSystem={unitSystem}
                      crews={crews}
                      editable={editable}
                      onMove={move}
                      onLock={lock}
                    />
                  ))}
                  {!run?.stops.length ? <li className="rounded-lg border-2 border-dashed border-line p-4 text-center text-ink-soft">No stops. Drop a stop here.</li> : null}
                </ol>
                {run && run.stops.length ? (
                  <div className="mt-3 flex flex-wrap gap-2">
                    {run.status === "draft" ? (
                      <fetcher.Form method="post">
                        <input type="hidden" name="intent" value="publish" />
                        <input type="hidden" name="runId" value={run.runId} />
                        <Button type="submit">Publish to {crew.name}</Button>
                      </fetcher.Form>
                    ) : null}
                    <a className={buttonClass("secondary")} href={`/api/runs/${run.runId}/gpx`}>
                      GPX <span className="sr-only">for {crew.name}</span>
                    </a>
                    <a className={buttonClass("secondary")} href={`/api/runs/${run.runId}/ics`}>
                      Calendar file <span className="sr-only">for {crew.name}</span>
                    </a>
                  </div>
                ) : null}
              </section>
            );
          })}
        </div>
      </div>

      <Card title={`Not on a run (${day.unplanned.length})`} className="mt-6">
        {day.unplanned.length === 0 ? (
          <p>Every open visit of the day is on a run.</p>
        ) : (
          <ul className="flex flex-col gap-2">
            {day.unplanned.map((visit) => (
              <li key={visit.visitId} className="flex flex-wrap items-center gap-3 rounded-lg border border-line p-3" data-testid={`unplanned-${visit.visitId}`}>
                <span className="min-w-0 flex-1">
                  <Link to={`/dispatch/visits/${visit.visitId}`} className="font-semibold text-pine-800 underline">
                    {visit.yardName}
                  </Link>{" "}
                  · {visit.customerName} · {visit.colonies} colonies · window {visit.windowLabel}
                  <span className="block text-sm text-ink-soft">{visit.deferReason ?? "Not planned yet: plan the day."}</span>
                </span>
                <fetcher.Form method="post">
                  <input type="hidden" name="intent" value="next-day" />
                  <input type="hidden" name="visitId" value={visit.visitId} />
                  <Button type="submit" variant="secondary">
                    Move to next day with room <span className="sr-only">: {visit.yardName}</span>
                  </Button>
                </fetcher.Form>
              </li>
            ))}
          </ul>
        )}
      </Card>
      <SafetyCautions audience="staff" className="mt-6" />
    </>
  );
}
