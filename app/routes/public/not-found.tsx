import { data } from "react-router";
import { ErrorPage } from "~/components/error-page";

export function loader() {
  throw data("There is nothing at this address.", { status: 404 });
}

export default function NotFound() {
  return <ErrorPage status={404} />;
}
