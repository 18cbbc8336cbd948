import { Link } from "react-router";
import { LogoMark } from "./logo-mark";

const TITLES: Record<number, { title: string; text: string }> = {
  403: { title: "Not allowed", text: "Your account does not have access to this page." },
  404: { title: "Page not found", text: "There is nothing at this address, or it is not yours to see." },
  500: { title: "Something went wrong", text: "The page could not be shown. Try again in a moment." },
};

/** The page shown by every error boundary: focusable heading, plain words, a way home. */
export function ErrorPage({ status, detail }: { status: number; detail?: string }) {
  const known = TITLES[status] ?? { title: `Error ${status}`, text: "The request could not be completed." };
  return (
    <main className="mx-auto flex min-h-[70vh] max-w-xl flex-col items-start justify-center gap-4 p-6" role="alert">
      <title>{`${known.title} · Varroute`}</title>
      <LogoMark className="h-12 w-12" />
      <p className="text-sm font-semibold tracking-wide text-ochre-700 uppercase">Error {status}</p>
      <h1 className="text-3xl font-bold">{known.title}</h1>
      <p className="text-lg text-ink-soft">{detail && status < 500 ? detail : known.text}</p>
      {detail && status >= 500 ? <pre className="max-w-full overflow-auto rounded bg-card p-3 text-xs">{detail}</pre> : null}
      <Link to="/" className="inline-flex min-h-11 items-center rounded-lg bg-pine-700 px-5 font-semibold text-white hover:bg-pine-800">
        Go to the start page
      </Link>
    </main>
  );
}
