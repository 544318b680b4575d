import { db } from "~/db/client.server";
import { auditEvents } from "~/db/schema";

export async function audit(e: {
  orgId: string;
  userId: string | null;
  action: string;
  entity: string;
  entityId?: string | null;
  detail?: Record<string, unknown>;
}): Promise<void> {
  await db().insert(auditEvents).values({ ...e, entityId: e.entityId ?? null, detail: e.detail ?? null });
}
