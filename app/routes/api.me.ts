import { eq } from "drizzle-orm";
import type { Route } from "./+types/api.me";
import { requireToken } from "~/services/session.server";
import { db } from "~/db/client.server";
import { organisations } from "~/db/schema";

export async function loader({ request }: Route.LoaderArgs) {
  const token = await requireToken(request, "read");
  const [org] = await db().select({ id: organisations.id, name: organisations.name }).from(organisations).where(eq(organisations.id, token.orgId));
  return Response.json({ organisation: org, scopes: token.scopes, tokenId: token.tokenId });
}
