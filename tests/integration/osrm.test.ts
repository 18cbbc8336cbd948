import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { travelMatrix } from "~/domain/travel";
import { osrmProvider, osrmTableUrl, RoutingEngineError, travelMatrixWithFallback, travelProviderFor } from "~/services/travel.server";

// A tiny stand-in for an OSRM server's /table service on 127.0.0.1 (random port). Its
// answer for three points is fixed, so the test knows exactly what the provider must return.
const POINTS = [
  { lat: 42.44, lng: -76.5 },
  { lat: 42.49, lng: -76.3 },
  { lat: 42.38, lng: -76.62 },
];
const DURATIONS = [
  [0, 901.4, 777.2],
  [905.6, 0, 1502.5],
  [780, 1499.9, 0],
];
const DISTANCES = [
  [0, 18123.4, 13999.6],
  [18200.2, 0, 30011],
  [14010, 29950.5, 0],
];

type Behaviour = "table" | "error" | "hang" | "nulls" | "not-json" | "wrong-size";

function fakeOsrm(behaviour: Behaviour) {
  const requests: string[] = [];
  const server = http.createServer((req, res) => {
    requests.push(req.url ?? "");
    if (behaviour === "hang") return; // never answers
    if (behaviour === "error") {
      res.writeHead(500, { "Content-Type": "text/plain" });
      res.end("internal error");
      return;
    }
    if (behaviour === "not-json") {
      res.writeHead(200, { "Content-Type": "application/json" });
      res.end("{durations: oops");
      return;
    }
    const durations = behaviour === "nulls" ? DURATIONS.map((row, i) => row.map((v, j) => (i === 1 && j === 2 ? null : v))) : DURATIONS;
    const body =
      behaviour === "wrong-size"
        ? { code: "Ok", durations: DURATIONS.slice(0, 2), distances: DISTANCES }
        : { code: "Ok", durations, distances: DISTANCES, sources: [], destinations: [] };
    res.writeHead(200, { "Content-Type": "application/json" });
    res.end(JSON.stringify(body));
  });
  return {
    requests,
    async start() {
      await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
      return `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    },
    async stop() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}

const settings = defaultBusinessSettings;
const estimate = travelMatrix(POINTS, settings);

describe("OSRM /table provider", () => {
  const servers = {
    table: fakeOsrm("table"),
    error: fakeOsrm("error"),
    hang: fakeOsrm("hang"),
    nulls: fakeOsrm("nulls"),
    notJson: fakeOsrm("not-json"),
    wrongSize: fakeOsrm("wrong-size"),
  };
  const urls: Record<keyof typeof servers, string> = {} as never;

  beforeAll(async () => {
    for (const [name, server] of Object.entries(servers)) urls[name as keyof typeof servers] = await server.start();
  });
  afterAll(async () => {
    for (const server of Object.values(servers)) await server.stop();
  });

  it("asks for durations and distances of every pair, longitude first", async () => {
    expect(osrmTableUrl("http://osrm.test:5000/", POINTS)).toBe(
      "http://osrm.test:5000/table/v1/driving/-76.500000,42.440000;-76.300000,42.490000;-76.620000,42.380000?annotations=duration,distance",
    );
    await osrmProvider(urls.table).matrix(POINTS);
    expect(servers.table.requests.at(-1)).toBe(
      "/table/v1/driving/-76.500000,42.440000;-76.300000,42.490000;-76.620000,42.380000?annotations=duration,distance",
    );
  });

  it("returns the engine's table in whole seconds and metres, row = from, column = to", async () => {
    const result = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: urls.table });
    expect(result.provider).toBe("osrm");
    expect(result.notice).toBeNull();
    expect(result.matrix.seconds).toEqual([
      [0, 901, 777],
      [906, 0, 1503],
      [780, 1500, 0],
    ]);
    expect(result.matrix.metres).toEqual([
      [0, 18123, 14000],
      [18200, 0, 30011],
      [14010, 29951, 0],
    ]);
    expect(travelProviderFor(settings, { osrmUrl: urls.table }).name).toBe("osrm");
  });

  it("uses the built-in estimate when no routing engine is configured", async () => {
    const result = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: null });
    expect(result).toEqual({ matrix: estimate, provider: "estimate", notice: null });
    expect(travelProviderFor(settings, { osrmUrl: null }).name).toBe("estimate");
  });

  it("falls back to the estimate with a notice when the engine answers 500", async () => {
    const result = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: urls.error });
    expect(result.provider).toBe("estimate");
    expect(result.matrix).toEqual(estimate);
    expect(result.notice).toBe(
      "The routing engine did not answer (HTTP 500); drive times are estimated from straight-line distance.",
    );
  });

  it("falls back when the engine never answers within the timeout", async () => {
    const result = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: urls.hang, timeoutMs: 300 });
    expect(result.provider).toBe("estimate");
    expect(result.matrix).toEqual(estimate);
    expect(result.notice).toMatch(/^The routing engine did not answer \(no answer within 0\.3 s\); drive times are estimated/);
  });

  it("falls back on a refused connection, bad JSON, a wrong-sized table and unroutable pairs", async () => {
    const closed = fakeOsrm("table");
    const closedUrl = await closed.start();
    await closed.stop();
    const refused = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: closedUrl });
    expect(refused.provider).toBe("estimate");
    expect(refused.notice).toMatch(/could not connect: ECONNREFUSED/);

    const badJson = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: urls.notJson });
    expect(badJson.notice).toMatch(/its answer is not JSON/);

    const wrongSize = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: urls.wrongSize });
    expect(wrongSize.notice).toMatch(/durations table is not 3 × 3/);

    const nulls = await travelMatrixWithFallback(POINTS, settings, { osrmUrl: urls.nulls });
    expect(nulls.provider).toBe("estimate");
    expect(nulls.matrix).toEqual(estimate);
    expect(nulls.notice).toMatch(/no road from point 2 to point 3/);

    await expect(osrmProvider(urls.error).matrix(POINTS)).rejects.toBeInstanceOf(RoutingEngineError);
  });
});
