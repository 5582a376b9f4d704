import type { Route } from "./+types/dashboard";
import { requireUser } from "~/.server/auth/permissions";
import { PageHeader } from "~/components/ui/card";
import { roleLabels } from "~/lib/roles";

export const meta: Route.MetaFunction = () => [{ title: "Today · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return { user };
}

export default function Dashboard({ loaderData }: Route.ComponentProps) {
  return (
    <div>
      <PageHeader title={`Good to see you, ${loaderData.user.name.split(" ")[0]}`} subtitle={`Signed in as ${roleLabels[loaderData.user.role].toLowerCase()}.`} />
    </div>
  );
}
