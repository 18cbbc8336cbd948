import type { ReactNode } from "react";
import { Link } from "react-router";
import { Card, PageHeader, Stat } from "./ui/card";
import { Table, Td, Th } from "./ui/table";
import { broodStatusName, formatServiceDate, visitStatusName } from "./format";
import type { ColonySummary, YardSummary, YardVisit } from "~/models/yards.server";
import { SafetyCautions } from "./safety-cautions";
import { TreatmentPlanCard } from "./treatment-plan-card";
import type { YardTreatmentPlan } from "~/domain/treatment-plan";
import { formatDose, type UnitSystem } from "~/domain/units";
import { BOX_TYPE_LABELS } from "~/domain/box-types";

/** A yard as customers and dispatchers see it: where, how to get in, colonies, visits. */
export function YardDetails({
  yard,
  colonies,
  visits,
  plan,
  unitSystem,
  doseRate,
  photos = [],
  actions,
  showCustomer = false,
}: {
  photos?: { id: number; name: string }[];
  actions?: ReactNode;
  yard: YardSummary;
  colonies: ColonySummary[];
  visits: YardVisit[];
  plan: YardTreatmentPlan;
  unitSystem: UnitSystem;
  doseRate: number;
  showCustomer?: boolean;
}) {
  return (
    <>
      <PageHeader
        title={yard.name}
        subtitle={
          <>
            {showCustomer ? <span className="font-semibold">{yard.customerName} · </span> : null}
            {yard.address ?? "No address given"} · {yard.lat.toFixed(5)}, {yard.lng.toFixed(5)}
          </>
        }
        actions={actions}
      />
      <div className="mb-6 grid grid-cols-2 gap-3 sm:grid-cols-3 lg:grid-cols-5">
        <Stat label="Colonies" value={yard.colonyCount} />
        <Stat label="Brood boxes per colony" value={yard.broodBoxesPerColony} />
        <Stat label="Brood box type" value={BOX_TYPE_LABELS[yard.boxType]} />
        <Stat label="Brood" value={broodStatusName(yard.broodStatus)} />
        <Stat label="Honey supers" value={yard.supersOff ? "Off" : "Not confirmed off"} tone={yard.supersOff ? "plain" : "attention"} />
      </div>
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <TreatmentPlanCard plan={plan} unitSystem={unitSystem} doseRate={doseRate} />
          <Card title="Access">
            <p className="whitespace-pre-line">{yard.accessNotes || "No access notes."}</p>
            <p className="mt-2 text-ink-soft">
              Next visit: {yard.nextVisitDate ? formatServiceDate(yard.nextVisitDate) : "none booked"}
            </p>
            {photos.length ? (
              <ul className="mt-3 grid grid-cols-3 gap-2 sm:grid-cols-4" aria-label="Photos">
                {photos.map((photo) => (
                  <li key={photo.id}>
                    <a href={`/api/attachments/${photo.id}`} className="block">
                      <img src={`/api/attachments/${photo.id}`} alt={`Photo ${photo.name}`} loading="lazy" className="aspect-square w-full rounded-lg border border-line object-cover" />
                    </a>
                  </li>
                ))}
              </ul>
            ) : null}
          </Card>
          <Card title="Colonies">
            <Table
              caption="Colonies in this yard"
              empty="No colonies are listed for this yard."
              head={
                <>
                  <Th>Colony</Th>
                  <Th align="right">Brood boxes</Th>
                  <Th>Box type</Th>
                  <Th>Brood</Th>
                  <Th>In use</Th>
                </>
              }
            >
              {colonies.map((colony) => (
                <tr key={colony.id}>
                  <Td>{colony.label}</Td>
                  <Td align="right">{colony.broodBoxes}</Td>
                  <Td>{BOX_TYPE_LABELS[colony.boxType]}</Td>
                  <Td>{broodStatusName(colony.broodStatus)}</Td>
                  <Td>{colony.active ? "Yes" : "No"}</Td>
                </tr>
              ))}
            </Table>
          </Card>
          <Card title="Visits">
            <Table
              caption="Treatment visits to this yard"
              empty="No visits yet."
              head={
                <>
                  <Th>Day</Th>
                  <Th>Round</Th>
                  <Th>Status</Th>
                  <Th align="right">Treated</Th>
                  <Th align="right">Skipped</Th>
                  <Th align="right">Applied</Th>
                </>
              }
            >
              {visits.map((visit) => (
                <tr key={visit.id}>
                  <Td>
                    {visit.status === "done" && !showCustomer ? (
                      <Link to={`/portal/visits/${visit.id}`} className="font-semibold text-pine-800 underline">
                        {formatServiceDate(visit.serviceDate)}
                      </Link>
                    ) : (
                      formatServiceDate(visit.serviceDate)
                    )}
                  </Td>
                  <Td>
                    {visit.roundNumber} of {visit.roundsPlanned}
                  </Td>
                  <Td>{visitStatusName(visit.status)}</Td>
                  <Td align="right">{visit.treated}</Td>
                  <Td align="right">{visit.skipped}</Td>
                  <Td align="right">{formatDose(visit.grams, unitSystem)}</Td>
                </tr>
              ))}
            </Table>
          </Card>
        </div>
        <SafetyCautions audience={showCustomer ? "staff" : "customer"} />
      </div>
    </>
  );
}
