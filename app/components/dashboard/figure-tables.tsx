import { useId, type ReactNode } from "react";
import { formatCents } from "~/components/format";
import type { CrewDayFigure, DrivePerColony, MiteLoadByArea, ReceivablesByAge, VisitsPerCrewDay, WashTotals } from "~/domain/season-figures";
import type { MoneyByWeek, TreatmentByWeek } from "~/models/season-dashboard.server";
import type { PeriodWeek } from "~/domain/season-figures";
import { dayRange, formatCount, formatGrams, formatMinutes, formatOneDecimal, formatReduction, longDay } from "./format";

// The tables behind the dashboard's charts: the same numbers, rendered on the server. Long
// tables scroll inside their own box (focusable, so a keyboard can scroll it too), with the
// column headings kept in view.

function FigureTable({ caption, head, children, foot, tall = false }: { caption: string; head: ReactNode; children: ReactNode; foot?: ReactNode; tall?: boolean }) {
  const captionId = useId();
  return (
    <div
      role="region"
      aria-labelledby={captionId}
      tabIndex={0}
      className={`overflow-auto rounded-lg border border-line bg-card ${tall ? "max-h-[26rem]" : ""}`}
    >
      <table className="w-full border-collapse text-left text-sm">
        <caption id={captionId} className="px-3 pt-2 pb-1 text-left text-sm font-semibold text-ink-soft">
          {caption}
        </caption>
        <thead className="sticky top-0 z-10 bg-pine-50 text-pine-900">
          <tr>{head}</tr>
        </thead>
        <tbody className="divide-y divide-line">{children}</tbody>
        {foot ? <tfoot className="sticky bottom-0 border-t-2 border-pine-700 bg-pine-50 font-semibold text-pine-900">{foot}</tfoot> : null}
      </table>
    </div>
  );
}

function Col({ children, right = false }: { children: ReactNode; right?: boolean }) {
  return (
    <th scope="col" className={`px-2 py-2 align-bottom font-semibold sm:px-3 ${right ? "text-right" : ""}`}>
      {children}
    </th>
  );
}

function RowHead({ children }: { children: ReactNode }) {
  return (
    <th scope="row" className="px-2 py-1.5 text-left font-normal sm:px-3 sm:whitespace-nowrap">
      {children}
    </th>
  );
}

/** "Week 42 (Oct 12–18)": on one line on wider screens, the days under the week on phones. */
function WeekHead({ week, withYear }: { week: PeriodWeek; withYear: boolean }) {
  return (
    <RowHead>
      <span className="whitespace-nowrap">
        Week {week.week}
        {withYear ? ` of ${week.isoYear}` : ""}
      </span>{" "}
      <span className="block whitespace-nowrap text-ink-soft sm:inline sm:text-ink">
        ({dayRange(week.from, week.to)}
        {week.partial ? ", part" : ""})
      </span>
    </RowHead>
  );
}

function Num({ children, quiet = false }: { children: ReactNode; quiet?: boolean }) {
  return <td className={`px-2 py-1.5 text-right whitespace-nowrap tabular-nums sm:px-3 ${quiet ? "text-ink-soft" : ""}`}>{children}</td>;
}

function TotalHead({ children }: { children: ReactNode }) {
  return (
    <th scope="row" className="px-2 py-2 text-left sm:px-3">
      {children}
    </th>
  );
}

export function TreatmentTable({ treatment, withYear }: { treatment: TreatmentByWeek; withYear: boolean }) {
  return (
    <FigureTable
      tall
      caption="Colonies treated and grams of oxalic acid dihydrate used, per week"
      head={
        <>
          <Col>Week</Col>
          <Col right>Colonies treated</Col>
          <Col right>Grams used</Col>
        </>
      }
      foot={
        <tr>
          <TotalHead>Period</TotalHead>
          <Num>{formatCount(treatment.colonies)}</Num>
          <Num>{formatGrams(treatment.grams)}</Num>
        </tr>
      }
    >
      {treatment.weeks.map((w) => (
        <tr key={w.week.key}>
          <WeekHead week={w.week} withYear={withYear} />
          <Num quiet={w.colonies === 0}>{formatCount(w.colonies)}</Num>
          <Num quiet={w.grams === 0}>{formatGrams(w.grams)}</Num>
        </tr>
      ))}
    </FigureTable>
  );
}

export function MoneyTable({ money, withYear }: { money: MoneyByWeek; withYear: boolean }) {
  return (
    <FigureTable
      tall
      caption="Invoiced, received and refunded, per week (US dollars)"
      head={
        <>
          <Col>Week</Col>
          <Col right>Invoiced</Col>
          <Col right>Received</Col>
          <Col right>Refunded</Col>
        </>
      }
      foot={
        <tr>
          <TotalHead>Period</TotalHead>
          <Num>{formatCents(money.invoicedCents)}</Num>
          <Num>{formatCents(money.receivedCents)}</Num>
          <Num>{formatCents(money.refundedCents)}</Num>
        </tr>
      }
    >
      {money.weeks.map((w) => (
        <tr key={w.week.key}>
          <WeekHead week={w.week} withYear={withYear} />
          <Num quiet={w.invoicedCents === 0}>{formatCents(w.invoicedCents)}</Num>
          <Num quiet={w.receivedCents === 0}>{formatCents(w.receivedCents)}</Num>
          <Num quiet={w.refundedCents === 0}>{formatCents(w.refundedCents)}</Num>
        </tr>
      ))}
    </FigureTable>
  );
}

export function ReceivablesTable({ receivables }: { receivables: ReceivablesByAge }) {
  return (
    <FigureTable
      caption={`Owed at the end of ${longDay(receivables.asOf)}, by days past the due date`}
      head={
        <>
          <Col>Age</Col>
          <Col right>Invoices</Col>
          <Col right>Owed</Col>
        </>
      }
      foot={
        <tr>
          <TotalHead>All open balances</TotalHead>
          <Num>{formatCount(receivables.totalInvoices)}</Num>
          <Num>{formatCents(receivables.totalCents)}</Num>
        </tr>
      }
    >
      {receivables.buckets.map((b) => (
        <tr key={b.key}>
          <RowHead>{b.label}</RowHead>
          <Num quiet={b.invoices === 0}>{formatCount(b.invoices)}</Num>
          <Num quiet={b.cents === 0}>{formatCents(b.cents)}</Num>
        </tr>
      ))}
    </FigureTable>
  );
}

function CrewRow({ crew }: { crew: CrewDayFigure }) {
  return (
    <tr>
      <RowHead>{crew.crewName}</RowHead>
      <Num>{formatCount(crew.crewDays)}</Num>
      <Num>{formatCount(crew.visits)}</Num>
      <Num>{formatOneDecimal(crew.average)}</Num>
    </tr>
  );
}

export function CrewDaysTable({ crewDays }: { crewDays: VisitsPerCrewDay }) {
  return (
    <FigureTable
      caption="Finished visits per crew-day, by crew"
      head={
        <>
          <Col>Crew</Col>
          <Col right>Crew-days</Col>
          <Col right>Finished visits</Col>
          <Col right>Visits per crew-day</Col>
        </>
      }
      foot={
        <tr>
          <TotalHead>All crews</TotalHead>
          <Num>{formatCount(crewDays.crewDays)}</Num>
          <Num>{formatCount(crewDays.visits)}</Num>
          <Num>{formatOneDecimal(crewDays.average)}</Num>
        </tr>
      }
    >
      {crewDays.crews.length === 0 ? (
        <tr>
          <td colSpan={4} className="px-3 py-4 text-center text-ink-soft">
            No crew finished a visit in this period.
          </td>
        </tr>
      ) : (
        crewDays.crews.map((crew) => <CrewRow key={crew.crewId} crew={crew} />)
      )}
    </FigureTable>
  );
}

export function DriveTable({ drive, withYear }: { drive: DrivePerColony; withYear: boolean }) {
  return (
    <FigureTable
      tall
      caption="Planned drive time of the runs worked and colonies treated on them, per week"
      head={
        <>
          <Col>Week</Col>
          <Col right>Runs</Col>
          <Col right>Drive time</Col>
          <Col right>Colonies treated</Col>
          <Col right>Minutes per colony</Col>
        </>
      }
      foot={
        <tr>
          <TotalHead>Period</TotalHead>
          <Num>{formatCount(drive.runs)}</Num>
          <Num>{formatMinutes(drive.driveMinutes)}</Num>
          <Num>{formatCount(drive.colonies)}</Num>
          <Num>{formatOneDecimal(drive.minutesPerColony)}</Num>
        </tr>
      }
    >
      {drive.weeks.map((w) => (
        <tr key={w.week.key}>
          <WeekHead week={w.week} withYear={withYear} />
          <Num quiet={w.runs === 0}>{formatCount(w.runs)}</Num>
          <Num quiet={w.runs === 0}>{formatMinutes(w.driveMinutes)}</Num>
          <Num quiet={w.colonies === 0}>{formatCount(w.colonies)}</Num>
          <Num quiet={w.minutesPerColony === null}>{formatOneDecimal(w.minutesPerColony)}</Num>
        </tr>
      ))}
    </FigureTable>
  );
}

function washCells(totals: WashTotals) {
  return (
    <>
      <Num quiet={totals.washes === 0}>{formatCount(totals.washes)}</Num>
      <Num quiet={totals.washes === 0}>
        {totals.washes === 0 ? "—" : `${formatCount(totals.mites)} in ${formatCount(totals.bees)}`}
      </Num>
      <Num quiet={totals.mitesPer100 === null}>{formatOneDecimal(totals.mitesPer100)}</Num>
    </>
  );
}

export function MitesTable({ mites }: { mites: MiteLoadByArea }) {
  return (
    <FigureTable
      tall
      caption="Mite washes before and after treatment, by area (mites per 100 bees)"
      head={
        <>
          <Col>Area</Col>
          <Col right>Washes before</Col>
          <Col right>Mites in bees sampled, before</Col>
          <Col right>Per 100 bees, before</Col>
          <Col right>Washes after</Col>
          <Col right>Mites in bees sampled, after</Col>
          <Col right>Per 100 bees, after</Col>
          <Col right>Change</Col>
        </>
      }
      foot={
        <tr>
          <TotalHead>All areas</TotalHead>
          {washCells(mites.before)}
          {washCells(mites.after)}
          <Num>{formatReduction(mites.reductionPercent)}</Num>
        </tr>
      }
    >
      {mites.areas.length === 0 ? (
        <tr>
          <td colSpan={8} className="px-3 py-4 text-center text-ink-soft">
            No mite washes were recorded at finished visits in this period.
          </td>
        </tr>
      ) : (
        mites.areas.map((a) => (
          <tr key={a.area.key}>
            <RowHead>
              {a.area.name}
              {a.area.kind === "sector" ? <span className="block text-xs text-ink-soft">no town in the address</span> : null}
            </RowHead>
            {washCells(a.before)}
            {washCells(a.after)}
            <Num quiet={a.reductionPercent === null}>{formatReduction(a.reductionPercent)}</Num>
          </tr>
        ))
      )}
    </FigureTable>
  );
}
