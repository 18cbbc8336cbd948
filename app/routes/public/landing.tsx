import { Link, useSearchParams } from "react-router";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { buttonClass } from "~/components/ui/button";
import type { Route } from "./+types/landing";

export const meta: Route.MetaFunction = () => [
  { title: "Varroute · oxalic acid vapor treatment, booked and routed" },
  { name: "description", content: "Book a Varroa treatment visit for your honey bee colonies." },
];

const STEPS = [
  { title: "Put your yards on the map", text: "Drop a pin for each apiary, say how many colonies and brood boxes, and how the crew gets in." },
  { title: "Book a day that has room", text: "The calendar shows how many colonies each day can still take. Pick one and a time of day." },
  { title: "A crew treats every colony", text: "One measured dose of oxalic acid dihydrate per brood box, vaporized at the entrance; colonies with brood get follow-up rounds." },
  { title: "See the report, pay online", text: "You get a visit report with mite counts and an invoice for the colonies actually treated." },
];

export default function Landing() {
  // After a customer deletes their account (app/routes/portal/account.tsx).
  const [params] = useSearchParams();
  const accountDeleted = params.get("accountDeleted") === "1";
  // The day the treatment records' name and places are removed, when some are kept.
  const kept = params.get("recordsKeptUntil");
  const keptUntil = kept && /^\d{4}-\d{2}-\d{2}$/.test(kept) && !Number.isNaN(Date.parse(`${kept}T00:00:00Z`)) ? kept : null;
  return (
    <div className="mx-auto max-w-5xl px-4 py-10">
      {accountDeleted ? (
        <p role="status" className="mb-8 rounded-xl border-2 border-pine-700 bg-pine-50 p-4 text-lg">
          {keptUntil
            ? `Your account is deleted and you are signed out. Your name, address and the places your colonies were treated stay on the treatment records the law asks us to keep, until ${formatServiceDate(keptUntil)}; then they are removed. Everything else is removed now.`
            : "Your account is deleted and you are signed out. Invoices and treatment records are kept without your name or contact details, as the law requires."}
        </p>
      ) : null}
      <section className="grid items-center gap-8 md:grid-cols-5">
        <div className="md:col-span-3">
          <p className="font-semibold tracking-wide text-ochre-700 uppercase">Varroa mite treatment for hobbyist beekeepers</p>
          <h1 className="mt-2 text-4xl leading-tight font-bold sm:text-5xl">Your colonies treated on time, without buying the kit.</h1>
          <p className="mt-4 text-lg text-ink-soft">
            Varroa mites kill more colonies than anything else in our climate. Book a visit and a trained, equipped crew treats
            every colony in your yard with oxalic acid vapor, then tells you what was done and what your mite counts say.
          </p>
          <div className="mt-6 flex flex-wrap gap-3">
            <Link to="/sign-up" className={buttonClass("primary", "text-lg")}>
              Book a treatment
            </Link>
            <Link to="/sign-in" className={buttonClass("secondary", "text-lg")}>
              Sign in
            </Link>
          </div>
        </div>
        <ol className="grid gap-3 md:col-span-2">
          {STEPS.map((step, i) => (
            <li key={step.title} className="flex gap-3 rounded-xl border border-line bg-card p-4">
              <span className="flex h-9 w-9 shrink-0 items-center justify-center rounded-full bg-pine-700 font-bold text-white" aria-hidden="true">
                {i + 1}
              </span>
              <span>
                <span className="block font-bold">{step.title}</span>
                <span className="block text-ink-soft">{step.text}</span>
              </span>
            </li>
          ))}
        </ol>
      </section>
      <SafetyCautions audience="customer" className="mt-10" />
    </div>
  );
}
