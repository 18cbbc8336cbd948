import type { ReactNode } from "react";
import { formatCents } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { PageHeader, Stat } from "~/components/ui/card";
import type { PeriodFieldErrors, PeriodPreset, PeriodPresetKey } from "~/domain/season-figures";
import type { SeasonDashboard } from "~/models/season-dashboard.server";
import { barListHeight, type ChartSpec } from "./chart-spec";
import { ChartSlot } from "./chart-slot";
import { CrewDaysTable, DriveTable, MitesTable, MoneyTable, ReceivablesTable, TreatmentTable } from "./figure-tables";
import { formatCount, formatGrams, longDay, weekName, weekTick } from "./format";
import { ChartKey, ChartPatterns, HATCHED_OCHRE, OCHRE_700, SOLID_PINE } from "./palette";
import { PeriodFilter } from "./period-filter";

// The season dashboard page: the period filter, the headline figures, then each figure as a
// chart with its table and a plain note on what it counts.

export type SeasonDashboardViewProps = {
  today: string;
  presets: PeriodPreset[];
  active: PeriodPresetKey | null;
  input: { from: string; to: string };
  errors: PeriodFieldErrors | null;
  dashboard: SeasonDashboard | null;
};

function Figure({
  id,
  title,
  note,
  chart,
  table,
  chartKey,
  tableBeside = true,
}: {
  id: string;
  title: string;
  note: ReactNode;
  chart: ReactNode;
  table: ReactNode;
  chartKey?: ReactNode;
  /** On wide screens, the table to the right of the chart (narrow tables) or under it (wide ones). */
  tableBeside?: boolean;
}) {
  return (
    <section aria-labelledby={id} className="mb-6 rounded-xl border border-line bg-card p-4 shadow-sm sm:p-5">
      <h2 id={id} className="text-xl font-bold">
        {title}
      </h2>
      <div className="mt-1 mb-4 max-w-3xl space-y-1 text-ink-soft">{note}</div>
      <div className={`grid grid-cols-1 gap-4 ${tableBeside ? "lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]" : ""}`}>
        <div className="min-w-0">
          {chartKey ? <div className="mb-2">{chartKey}</div> : null}
          {chart}
        </div>
        <div className="min-w-0">{table}</div>
      </div>
    </section>
  );
}

const SAME_FIGURES = "The same figures are in the table that follows.";
const WEEK_CHART_HEIGHT = 320;

export function SeasonDashboardView({ today, presets, active, input, errors, dashboard }: SeasonDashboardViewProps) {
  return (
    <>
      <PageHeader
        title="Season dashboard"
        subtitle={
          dashboard
            ? `Figures from ${longDay(dashboard.period.from)} to ${longDay(dashboard.period.to)}, in the business's time zone.`
            : "Choose a period to see its figures."
        }
      />
      <PeriodFilter presets={presets} active={active} input={input} errors={errors} today={today} />
      {dashboard ? (
        <Figures dashboard={dashboard} />
      ) : (
        <p className="mb-6 rounded-lg border-2 border-alarm-700 bg-alarm-100 px-4 py-3 font-semibold text-alarm-700">
          The figures show once the period's dates are right; see the messages at the date fields.
        </p>
      )}
      <SafetyCautions audience="staff" className="mt-8" />
    </>
  );
}

function Figures({ dashboard }: { dashboard: SeasonDashboard }) {
  const { period, headline, treatment, money, receivables, crewDays, drive, mites } = dashboard;
  const withYear = new Set(treatment.weeks.map((w) => w.week.isoYear)).size > 1;
  const span = `${longDay(period.from)} to ${longDay(period.to)}`;
  const pastDueCents = receivables.buckets.filter((b) => b.key !== "not_due").reduce((n, b) => n + b.cents, 0);

  const treatmentChart: ChartSpec = {
    kind: "treatment",
    rows: treatment.weeks.map((w) => ({ tick: weekTick(w.week), name: weekName(w.week, withYear), colonies: w.colonies, grams: w.grams })),
  };
  const moneyChart: ChartSpec = {
    kind: "money",
    rows: money.weeks.map((w) => ({ tick: weekTick(w.week), name: weekName(w.week, withYear), invoiced: w.invoicedCents / 100, received: w.receivedCents / 100 })),
  };
  const receivablesChart: ChartSpec = {
    kind: "receivables",
    asOf: receivables.asOf,
    rows: receivables.buckets.map((b) => ({ name: b.label, dollars: b.cents / 100, due: b.key !== "not_due" })),
  };
  const crewChart: ChartSpec = {
    kind: "crew-days",
    rows: crewDays.crews.map((c) => ({ name: c.crewName, average: c.average ?? 0 })),
    overall: crewDays.average,
  };
  const driveChart: ChartSpec = {
    kind: "drive",
    rows: drive.weeks.map((w) => ({ tick: weekTick(w.week), name: weekName(w.week, withYear), minutesPerColony: w.minutesPerColony })),
  };
  const mitesChart: ChartSpec = {
    kind: "mites",
    rows: mites.areas.map((a) => ({ name: a.area.name, before: a.before.mitesPer100, after: a.after.mitesPer100 })),
  };

  return (
    <>
      <ChartPatterns />
      <section aria-labelledby="headline-heading" className="mb-6">
        <h2 id="headline-heading" className="sr-only">
          Headline figures
        </h2>
        <div className="grid grid-cols-2 gap-3 lg:grid-cols-5">
          <Stat label="Colonies treated" value={formatCount(headline.colonies)} />
          <Stat label="Oxalic acid dihydrate used" value={formatGrams(headline.grams)} />
          <Stat label="Revenue invoiced" value={formatCents(headline.invoicedCents)} />
          <Stat label="Received" value={formatCents(headline.receivedCents)} />
          <Stat
            label={`Owed on ${longDay(receivables.asOf)}`}
            value={formatCents(headline.receivablesCents)}
            tone={pastDueCents > 0 ? "attention" : "plain"}
          />
        </div>
        {pastDueCents > 0 ? (
          <p className="mt-2 text-sm text-ink-soft">
            {formatCents(pastDueCents)} of it is past its due date.
          </p>
        ) : null}
      </section>

      <Figure
        id="treatment-heading"
        title="Colonies treated and oxalic acid used"
        note={
          <p>
            Colonies marked treated at finished visits, by the week of the visit (weeks run Monday to Sunday; the first and last may be
            part weeks, cut at the period's ends). Grams are the doses recorded for those colonies.
          </p>
        }
        chartKey={
          <ChartKey
            items={[
              { label: "Colonies treated (bars, left scale)", look: SOLID_PINE },
              { label: "Grams used (dashed line, right scale)", look: { fill: OCHRE_700, stroke: OCHRE_700 }, shape: "line" },
            ]}
          />
        }
        chart={<ChartSlot spec={treatmentChart} height={WEEK_CHART_HEIGHT} label={`Chart of colonies treated and grams used per week, ${span}. ${SAME_FIGURES}`} />}
        table={<TreatmentTable treatment={treatment} withYear={withYear} />}
      />

      <Figure
        id="money-heading"
        title="Money invoiced and received"
        note={
          <p>
            Invoiced: the totals of invoices issued in the week, void invoices left out. Received: payments by the day they came in,
            whichever invoice they paid. Refunds are listed in the table and not taken off either figure.
          </p>
        }
        chartKey={
          <ChartKey
            items={[
              { label: "Invoiced (solid)", look: SOLID_PINE },
              { label: "Received (striped)", look: HATCHED_OCHRE },
            ]}
          />
        }
        chart={<ChartSlot spec={moneyChart} height={WEEK_CHART_HEIGHT} label={`Chart of dollars invoiced and received per week, ${span}. ${SAME_FIGURES}`} />}
        table={<MoneyTable money={money} withYear={withYear} />}
        tableBeside={false}
      />

      <Figure
        id="receivables-heading"
        title={`Owed at the end of ${longDay(receivables.asOf)}`}
        note={
          <p>
            Every invoice issued by the period's last day and not void, at its total less the payments received by the end of that day
            (a refund is money given back by agreement and does not make it owed again), grouped by how many days past its due date it
            was then.
          </p>
        }
        chartKey={
          <ChartKey
            items={[
              { label: "Not yet due (solid)", look: SOLID_PINE },
              { label: "Past due (striped)", look: HATCHED_OCHRE },
            ]}
          />
        }
        chart={
          <ChartSlot
            spec={receivablesChart}
            height={barListHeight(receivables.buckets.length, 40)}
            label={`Chart of dollars owed on ${longDay(receivables.asOf)} by days past due. ${SAME_FIGURES}`}
          />
        }
        table={<ReceivablesTable receivables={receivables} />}
      />

      <Figure
        id="crew-days-heading"
        title="Visits per crew-day"
        note={
          <p>
            A crew-day is one crew's run on one service day on which it finished at least one visit. The bars are each crew's finished
            visits divided by its crew-days; the dashed line is the same over all crews.
          </p>
        }
        chartKey={
          <ChartKey
            items={[
              { label: "Each crew's average", look: SOLID_PINE },
              { label: "All crews (dashed line)", look: { fill: OCHRE_700, stroke: OCHRE_700 }, shape: "line" },
            ]}
          />
        }
        chart={
          crewDays.crews.length > 0 ? (
            <ChartSlot spec={crewChart} height={barListHeight(crewDays.crews.length)} label={`Chart of finished visits per crew-day by crew, ${span}. ${SAME_FIGURES}`} />
          ) : (
            <p className="rounded-lg bg-paper px-4 py-6 text-center text-ink-soft">No crew finished a visit in this period.</p>
          )
        }
        table={<CrewDaysTable crewDays={crewDays} />}
      />

      <Figure
        id="drive-heading"
        title="Drive time per colony"
        note={
          <p>
            The planned drive time of each run worked (from its start point, between the yards and back, as the planner timed it),
            divided by the colonies treated on it. A run counts when at least one of its visits was finished; weeks without one show no
            bar.
          </p>
        }
        chart={<ChartSlot spec={driveChart} height={WEEK_CHART_HEIGHT} label={`Chart of planned drive minutes per colony treated, per week, ${span}. ${SAME_FIGURES}`} />}
        table={<DriveTable drive={drive} withYear={withYear} />}
        tableBeside={false}
      />

      <Figure
        id="mites-heading"
        title="Mite load before and after treatment, by area"
        note={
          <>
            <p>
              From the mite washes recorded at finished visits: mites counted in a sample of bees. Before: washes at a course's first
              round, taken before its first vapor. After: washes at its later rounds. Each figure pools an area's washes, all mites
              counted ÷ all bees sampled × 100.
            </p>
            <p>
              The area is the yard's town, read from its address (the part before the state and ZIP code). A yard whose address names
              no town is counted by its compass direction from the middle of the crews' start points, e.g. "North-east of base".
            </p>
          </>
        }
        chartKey={
          <ChartKey
            items={[
              { label: "Before (striped)", look: HATCHED_OCHRE },
              { label: "After (solid)", look: SOLID_PINE },
            ]}
          />
        }
        chart={
          mites.areas.length > 0 ? (
            <ChartSlot
              spec={mitesChart}
              height={barListHeight(mites.areas.length, 56)}
              label={`Chart of mites per 100 bees before and after treatment by area, ${span}. ${SAME_FIGURES}`}
            />
          ) : (
            <p className="rounded-lg bg-paper px-4 py-6 text-center text-ink-soft">No mite washes were recorded at finished visits in this period.</p>
          )
        }
        table={<MitesTable mites={mites} />}
        tableBeside={false}
      />
    </>
  );
}
