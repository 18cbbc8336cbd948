// Helpers for the local SMTP sink (maildev, started by scripts/lib.sh: SMTP on
// 127.0.0.1:11025, REST API and web UI on 127.0.0.1:11080, or MAILDEV_API_URL).
// The sink is shared by every test file and the worker: address test e-mails to unique
// recipients and look them up by recipient rather than clearing the sink.

export type SinkAddress = { address: string; name: string };

export type SinkEmail = {
  id: string;
  time: string;
  subject: string;
  from: SinkAddress[];
  to: SinkAddress[];
  headers: Record<string, string | string[]>;
  html?: string;
  text?: string;
  attachments?: { fileName?: string; generatedFileName?: string; contentType: string; length?: number }[];
};

export function sinkApiUrl(): string {
  return (process.env.MAILDEV_API_URL ?? "http://127.0.0.1:11080").replace(/\/+$/, "");
}

async function sinkFetch(path: string, init?: RequestInit): Promise<Response> {
  let response: Response;
  try {
    response = await fetch(`${sinkApiUrl()}${path}`, init);
  } catch (error) {
    throw new Error(
      `the mail sink does not answer at ${sinkApiUrl()} (start it: ./node_modules/.bin/maildev --smtp 11025 --ip 127.0.0.1 --web 11080 --web-ip 127.0.0.1): ${String(error)}`,
    );
  }
  if (!response.ok) throw new Error(`mail sink ${init?.method ?? "GET"} ${path}: HTTP ${response.status}`);
  return response;
}

/** Every e-mail the sink holds. */
export async function sinkEmails(): Promise<SinkEmail[]> {
  return (await sinkFetch("/api/email")).json() as Promise<SinkEmail[]>;
}

/** The e-mails the sink holds for one recipient (case-insensitive). */
export async function emailsTo(to: string): Promise<SinkEmail[]> {
  const wanted = to.toLowerCase();
  return (await sinkEmails()).filter((email) => email.to.some((a) => a.address.toLowerCase() === wanted));
}

/** The HTML body of one e-mail as the sink serves it. */
export async function sinkHtml(id: string): Promise<string> {
  return (await sinkFetch(`/api/email/${encodeURIComponent(id)}/html`)).text();
}

/** Deletes every e-mail in the sink. Only for a test that owns the sink alone. */
export async function clearSink(): Promise<void> {
  await sinkFetch("/api/email/all", { method: "DELETE" });
}

/**
 * Waits until the sink holds an e-mail to `to` that satisfies `predicate`, and returns it
 * with its HTML read from the sink. Fails after `timeoutMs`.
 */
export async function waitForEmail(
  to: string,
  predicate: (email: SinkEmail) => boolean = () => true,
  timeoutMs = 10_000,
): Promise<SinkEmail & { html: string }> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const found = (await emailsTo(to)).find(predicate);
    if (found) return { ...found, html: await sinkHtml(found.id) };
    if (Date.now() > until) throw new Error(`no e-mail to ${to} reached the sink within ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 150));
  }
}
