import { apiError } from "~/.server/http";

export function loader() {
  return apiError(404, "not_found", "There is no such API route.");
}

export function action() {
  return apiError(404, "not_found", "There is no such API route.");
}
