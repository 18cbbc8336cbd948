import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";

/** The oxalic acid vapor cautions, shown wherever doses, runs or bookings show.
 *  Customers get the same list, introduced as what the crew wears and why supers come off. */
export function SafetyCautions({ audience, className = "" }: { audience: "customer" | "staff" | "crew"; className?: string }) {
  const intro =
    audience === "customer"
      ? "Keep people and pets away from the hives while the crew works, and take honey supers off before the visit. The crew works with these precautions:"
      : "Before every dose:";
  return (
    <aside aria-labelledby="safety-cautions-title" className={`h-fit rounded-xl border-2 border-ochre-500 bg-ochre-100 p-4 text-ink ${className}`}>
      <h2 id="safety-cautions-title" className="flex items-center gap-2 text-lg font-bold">
        <svg viewBox="0 0 24 24" className="h-6 w-6 shrink-0" aria-hidden="true">
          <path d="M12 2 1 21h22Z" fill="#8a520a" />
          <path d="M12 9v5" stroke="#fff" strokeWidth="2.4" strokeLinecap="round" />
          <circle cx="12" cy="17.3" r="1.4" fill="#fff" />
        </svg>
        Safety with oxalic acid vapor
      </h2>
      <p className="mt-2 font-semibold">{intro}</p>
      <ul className="mt-2 flex flex-col gap-2">
        {SAFETY_CAUTIONS.map((caution) => (
          <li key={caution.id}>
            <span className="font-bold">{caution.title}.</span> {caution.text}
          </li>
        ))}
      </ul>
      <p className="mt-3 border-t border-ochre-500 pt-3 text-sm">{LABEL_DEFERENCE_NOTICE}</p>
    </aside>
  );
}
