import { data } from "react-router";

// Being built.
export function loader() {
  throw data("This link is not valid.", { status: 404 });
}

export default function Page() {
  return null;
}
