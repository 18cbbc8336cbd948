/** Varroute's mark: a hexagon cell with a three-stop route drawn through it.
 *  `onDark` swaps the cell and route colours for use on the pine header. */
export function LogoMark({ className = "h-8 w-8", onDark = false }: { className?: string; onDark?: boolean }) {
  const cell = onDark ? "#fbeccf" : "#175a43";
  const route = onDark ? "#175a43" : "#fbeccf";
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true" focusable="false">
      <path d="M16 2 28.1 9v14L16 30 3.9 23V9Z" fill={cell} />
      <path d="M9 21.5 14.5 11l8.5 7.5" fill="none" stroke={route} strokeWidth="2.2" strokeLinecap="round" strokeLinejoin="round" />
      <circle cx="9" cy="21.5" r="2.6" fill="#c7801a" />
      <circle cx="14.5" cy="11" r="2.6" fill={route} />
      <circle cx="23" cy="18.5" r="2.6" fill="#c7801a" />
    </svg>
  );
}
