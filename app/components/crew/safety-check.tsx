import { useState } from "react";
import type { SafetyItems } from "./field-types";

const ITEMS: { key: keyof SafetyItems; label: string }[] = [
  { key: "respirator", label: "Respirator with acid-gas and particulate filters, fitted" },
  { key: "eyeProtection", label: "Sealed eye protection on" },
  { key: "gloves", label: "Acid-resistant gloves on" },
  { key: "vaporizerReady", label: "Vaporizer checked and ready" },
];

/** The check before the first stop: all four ticked, then the run can start. */
export function SafetyCheck({ onConfirm }: { onConfirm: (items: SafetyItems) => void }) {
  const [items, setItems] = useState<SafetyItems>({ respirator: false, eyeProtection: false, gloves: false, vaporizerReady: false });
  const all = Object.values(items).every(Boolean);
  return (
    <section aria-labelledby="safety-check-title" className="mb-4 rounded-xl border-2 border-alarm-700 bg-alarm-100 p-3">
      <h2 id="safety-check-title" className="text-xl font-bold">
        Safety check before the first stop
      </h2>
      <ul className="mt-2 flex flex-col gap-2">
        {ITEMS.map((item) => (
          <li key={item.key}>
            <label className="flex min-h-14 items-center gap-3 rounded-lg border-2 border-line bg-card px-3 text-lg font-semibold">
              <input type="checkbox" className="h-7 w-7 accent-pine-700" checked={items[item.key]} onChange={(e) => setItems((s) => ({ ...s, [item.key]: e.target.checked }))} />
              {item.label}
            </label>
          </li>
        ))}
      </ul>
      <button type="button" disabled={!all} onClick={() => onConfirm(items)} className="mt-3 min-h-14 w-full rounded-xl bg-pine-700 px-4 text-xl font-bold text-white disabled:opacity-50">
        {all ? "Start the run" : "Tick all four to start"}
      </button>
    </section>
  );
}
