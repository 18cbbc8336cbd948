import { z } from "zod";
import type { BusinessSettings } from "~/domain/settings";
import { estimateProvider, type LatLng, type TravelMatrix, type TravelProvider } from "~/domain/travel";
import { serverEnv } from "./env.server";

// Drive times for the route planner: an OSRM-compatible routing engine's /table service
// when OSRM_URL is set, else the built-in straight-line estimate (app/domain/travel.ts).
// A routing engine that fails (no answer, an error status, a malformed table, a pair of
// points it cannot route between) never stops planning: the estimate stands in, and the
// caller gets a notice to show the dispatcher.

/** How long the routing engine may take to answer one table request. */
export const OSRM_TIMEOUT_MS = 10_000;

export type TravelProviderName = "osrm" | "estimate";

export type TravelMatrixResult = {
  matrix: TravelMatrix;
  provider: TravelProviderName;
  /** Why the estimate stands in for a configured routing engine, for the dispatcher; else null. */
  notice: string | null;
};

/** What went wrong with the routing engine, in a few words for the notice. */
export class RoutingEngineError extends Error {
  constructor(readonly reason: string) {
    super(`routing engine: ${reason}`);
    this.name = "RoutingEngineError";
  }
}

const cell = z.number().finite().nonnegative().nullable();
const osrmTableSchema = z.object({
  code: z.string(),
  message: z.string().optional(),
  durations: z.array(z.array(cell)).optional(),
  distances: z.array(z.array(cell)).optional(),
});

function coordinate(point: LatLng): string {
  if (!Number.isFinite(point.lat) || !Number.isFinite(point.lng)) throw new RangeError("a point has no coordinates");
  // OSRM takes longitude first.
  return `${point.lng.toFixed(6)},${point.lat.toFixed(6)}`;
}

/** The /table request for a list of points (durations and distances, every pair). */
export function osrmTableUrl(baseUrl: string, points: readonly LatLng[]): string {
  const base = baseUrl.replace(/\/+$/, "");
  return `${base}/table/v1/driving/${points.map(coordinate).join(";")}?annotations=duration,distance`;
}

function squareTable(rows: (number | null)[][] | undefined, n: number, what: string): number[][] {
  if (!rows) throw new RoutingEngineError(`its answer has no ${what}`);
  if (rows.length !== n || rows.some((row) => row.length !== n)) {
    throw new RoutingEngineError(`its ${what} table is not ${n} × ${n}`);
  }
  return rows.map((row, i) =>
    row.map((value, j) => {
      if (value === null) throw new RoutingEngineError(`it found no road from point ${i + 1} to point ${j + 1}`);
      return Math.round(value);
    }),
  );
}

function describeFailure(error: unknown): string {
  if (error instanceof RoutingEngineError) return error.reason;
  if (error instanceof Error) {
    if (error.name === "TimeoutError" || error.name === "AbortError") return "no answer within the time allowed";
    const cause = (error as { cause?: { code?: unknown; message?: unknown } }).cause;
    if (cause && typeof cause.code === "string") return `could not connect: ${cause.code}`;
    return error.message;
  }
  return String(error);
}

/**
 * A travel provider backed by an OSRM-compatible /table service. Durations are seconds and
 * distances metres, rounded to whole numbers; every failure throws a RoutingEngineError.
 */
export function osrmProvider(baseUrl: string, options: { timeoutMs?: number } = {}): TravelProvider {
  const timeoutMs = options.timeoutMs ?? OSRM_TIMEOUT_MS;
  return {
    name: "osrm",
    async matrix(points) {
      const n = points.length;
      if (n === 0) return { seconds: [], metres: [] };
      let response: Response;
      try {
        response = await fetch(osrmTableUrl(baseUrl, points), {
          headers: { Accept: "application/json" },
          signal: AbortSignal.timeout(timeoutMs),
        });
      } catch (error) {
        const reason = describeFailure(error);
        throw new RoutingEngineError(reason === "no answer within the time allowed" ? `no answer within ${Math.round(timeoutMs / 100) / 10} s` : reason);
      }
      let body: unknown;
      try {
        body = await response.json();
      } catch {
        throw new RoutingEngineError(response.ok ? "its answer is not JSON" : `HTTP ${response.status}`);
      }
      const parsed = osrmTableSchema.safeParse(body);
      if (!response.ok) {
        const detail = parsed.success ? [parsed.data.code, parsed.data.message].filter(Boolean).join(": ") : "";
        throw new RoutingEngineError(`HTTP ${response.status}${detail ? `, ${detail}` : ""}`);
      }
      if (!parsed.success) throw new RoutingEngineError("its answer is not a travel-time table");
      if (parsed.data.code !== "Ok") {
        throw new RoutingEngineError([parsed.data.code, parsed.data.message].filter(Boolean).join(": "));
      }
      return {
        seconds: squareTable(parsed.data.durations, n, "durations"),
        metres: squareTable(parsed.data.distances, n, "distances"),
      };
    },
  };
}

/** The built-in estimate with the business's road circuity factor and average speed. */
export function estimateProviderFor(settings: Pick<BusinessSettings, "circuityFactor" | "averageSpeedKmh">): TravelProvider {
  return estimateProvider({ circuityFactor: settings.circuityFactor, averageSpeedKmh: settings.averageSpeedKmh });
}

export type TravelOptions = {
  /** The routing engine's base URL; OSRM_URL from the environment unless given (null: none). */
  osrmUrl?: string | null;
  timeoutMs?: number;
};

function configuredOsrmUrl(options: TravelOptions): string | null {
  return options.osrmUrl !== undefined ? options.osrmUrl : (serverEnv().OSRM_URL ?? null);
}

/** The routing engine when one is configured, else the built-in estimate. */
export function travelProviderFor(
  settings: Pick<BusinessSettings, "circuityFactor" | "averageSpeedKmh">,
  options: TravelOptions = {},
): TravelProvider {
  const url = configuredOsrmUrl(options);
  return url ? osrmProvider(url, { timeoutMs: options.timeoutMs }) : estimateProviderFor(settings);
}

/**
 * The travel matrix for the planner: from the routing engine when one is configured and it
 * answers well, else from the estimate, with a notice saying why.
 */
export async function travelMatrixWithFallback(
  points: readonly LatLng[],
  settings: Pick<BusinessSettings, "circuityFactor" | "averageSpeedKmh">,
  options: TravelOptions = {},
): Promise<TravelMatrixResult> {
  const url = configuredOsrmUrl(options);
  const estimate = () => estimateProviderFor(settings).matrix([...points]);
  if (!url) return { matrix: await estimate(), provider: "estimate", notice: null };
  try {
    const matrix = await osrmProvider(url, { timeoutMs: options.timeoutMs }).matrix([...points]);
    return { matrix, provider: "osrm", notice: null };
  } catch (error) {
    const reason = describeFailure(error);
    return {
      matrix: await estimate(),
      provider: "estimate",
      notice: `The routing engine did not answer (${reason}); drive times are estimated from straight-line distance.`,
    };
  }
}
