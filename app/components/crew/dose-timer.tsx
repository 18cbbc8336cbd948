import { useEffect, useState } from "react";

/** A countdown for one dose: the sublimation time from settings, big and readable. */
export function DoseTimer({ seconds, label }: { seconds: number; label: string }) {
  const [left, setLeft] = useState<number | null>(null);
  useEffect(() => {
    if (left === null || left <= 0) return;
    const t = setTimeout(() => setLeft((l) => (l === null ? null : l - 1)), 1000);
    return () => clearTimeout(t);
  }, [left]);
  const running = left !== null && left > 0;
  return (
    <button
      type="button"
      onClick={() => setLeft(running ? null : seconds)}
      className={`min-h-12 rounded-lg border-2 px-3 font-bold ${running ? "border-ochre-700 bg-ochre-100" : left === 0 ? "border-pine-700 bg-pine-50" : "border-line bg-card"}`}
      aria-live="polite"
    >
      {running ? `Vaporizing: ${left} s (tap to stop)` : left === 0 ? "Dose done ✓ (tap to restart)" : `Dose timer ${seconds} s`}
      <span className="sr-only"> for {label}</span>
    </button>
  );
}
