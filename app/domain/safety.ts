/**
 * Safety and law: the cautions shown wherever a dose, a run or a booking is shown,
 * and the notice that Varroute defers to the product label and local rules.
 */

/** One caution, shown as a short title with its text. */
export interface SafetyCaution {
  id: "respirator" | "eye-protection" | "gloves" | "honey-supers" | "label" | "licensing";
  title: string;
  text: string;
}

/** The usual cautions for oxalic acid vapor, in the order they are shown. */
export const SAFETY_CAUTIONS: readonly SafetyCaution[] = [
  {
    id: "respirator",
    title: "Respirator",
    text:
      "Oxalic acid vapor burns eyes and airways. Wear a respirator with acid-gas and particulate filters and keep upwind of the hive while it vaporizes (exposure limit 1 mg/m³ over 8 hours, OSHA PEL).",
  },
  {
    id: "eye-protection",
    title: "Sealed eye protection",
    text: "Wear sealed goggles or a full-face respirator; ordinary glasses do not keep the vapor out.",
  },
  {
    id: "gloves",
    title: "Acid-resistant gloves",
    text: "Wear acid-resistant gloves when measuring doses and handling the vaporizer, which stays hot between hives.",
  },
  {
    id: "honey-supers",
    title: "No honey supers for people",
    text: "Do not treat with honey supers on that will be harvested for people to eat, unless your product's label allows it.",
  },
  {
    id: "label",
    title: "Follow the label",
    text: "Follow the product label for the dose, timing and protective equipment. The label is the law.",
  },
  {
    id: "licensing",
    title: "Licence for hire",
    text:
      "Applying a pesticide for hire commonly needs a commercial applicator's licence and application records; check your state's or country's rules.",
  },
];

/** Varroute's notice that its figures never override the label or local rules. */
export const LABEL_DEFERENCE_NOTICE =
  "Varroute calculates doses, schedules and records from the figures your business entered in its settings. " +
  "It does not replace the product label or local law: where the label or your local rules say otherwise, " +
  "they apply, and nothing Varroute shows is a licence to deviate from them. Check every dose against the label " +
  "on the package you use, and make sure whoever applies it holds any licence your jurisdiction requires.";

/** Looks up one caution by its id. */
export function safetyCaution(id: SafetyCaution["id"]): SafetyCaution {
  const caution = SAFETY_CAUTIONS.find((c) => c.id === id);
  if (!caution) throw new RangeError(`no safety caution ${id}`);
  return caution;
}
