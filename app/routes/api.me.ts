import { eq } from "drizzle-orm";
import type { Route } from "./+types/api.me";
import { requireToken } from "~/services/session.server";
import { db } from "~/db/client.server";
import { organisations } from "~/db/schema";
import { TOKEN_SCOPES, type TokenScope } from "~/permissions";
import { apiJson, meResponse } from "~/lib/api-schemas";

export async function loader({ request }: Route.LoaderArgs) {
  const token = await requireToken(request, "read");
  const [org] = await db().select({ id: organisations.id, name: organisations.name }).from(organisations).where(eq(organisations.id, token.orgId));
  return apiJson(meResponse, { organisation: org!, scopes: token.scopes.filter(isScope), tokenId: token.tokenId });
}

const isScope = (s: string): s is TokenScope => (TOKEN_SCOPES as readonly string[]).includes(s);
