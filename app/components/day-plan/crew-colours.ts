/** Route colours per crew on the day screen, in crew order: Varroute's own, distinct on paper. */
export const CREW_COLOURS = ["#175a43", "#8a520a", "#5b3a8c", "#a3241a", "#2b5d8a"];

export function crewColour(index: number): string {
  return CREW_COLOURS[index % CREW_COLOURS.length];
}
