import { healthResponse } from "~/services/health.server";

// Public health check for load balancers and the start script: 200 when the database
// answers, 503 when it does not. It reveals nothing but that state.
export function loader() {
  return healthResponse();
}
