import { redirect } from "react-router";
import type { Route } from "./+types/sign-out";
import { endSession } from "~/.server/auth/session";

export async function action({ request }: Route.ActionArgs) {
  return endSession(request, "/sign-in");
}

export function loader() {
  return redirect("/");
}
