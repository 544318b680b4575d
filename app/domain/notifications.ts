/**
 * Which event sends which e-mail, to whom, and what it says. Pure: the job
 * (app/jobs/notifications.server.ts) finds the people and the rows and sends.
 */
import { addDays, formatNumber, isActive, type WorkOrderState } from "./work-orders";

export const NOTIFICATION_KINDS = ["assignment", "due soon", "overdue", "digest", "import finished", "import failed"] as const;
export type NotificationKind = (typeof NOTIFICATION_KINDS)[number];

/** The choices on the settings page; each covers one or more kinds. */
export const PREF_KEYS = ["assignment", "due", "digest", "imports"] as const;
export type PrefKey = (typeof PREF_KEYS)[number];
export type Prefs = Record<PrefKey, boolean>;

export const PREF_LABELS: Record<PrefKey, { label: string; hint: string }> = {
  assignment: { label: "A work order is assigned to me", hint: "Sent at once, with the place and what to check." },
  due: { label: "My work orders are due soon or overdue", hint: "Checked every morning: the day before the due date, and once when it has passed." },
  digest: { label: "Daily digest (O&M leads)", hint: "New flags, flags that need a flight, and work orders done in the last day." },
  imports: { label: "My data imports finished or failed", hint: "Sent to the person who uploaded the file." },
};

export const PREF_FOR_KIND: Record<NotificationKind, PrefKey> = {
  assignment: "assignment",
  "due soon": "due",
  overdue: "due",
  digest: "digest",
  "import finished": "imports",
  "import failed": "imports",
};

export const DEFAULT_PREFS: Prefs = { assignment: true, due: true, digest: true, imports: true };

/** No saved row means every e-mail: people opt out, not in. */
export function wants(prefs: Partial<Prefs> | null | undefined, kind: NotificationKind): boolean {
  return (prefs ?? DEFAULT_PREFS)[PREF_FOR_KIND[kind]] ?? true;
}

export interface DueCandidate {
  id: string;
  state: WorkOrderState;
  dueOn: string | null;
  assigneeId: string | null;
  dueSoonNotifiedAt: Date | null;
  overdueNotifiedAt: Date | null;
}

/**
 * The reminders the morning run sends: "due soon" once when the due date is today or tomorrow,
 * "overdue" once after it has passed. Only active orders with an assignee.
 */
export function dueNotices(orders: readonly DueCandidate[], today: string): { id: string; kind: "due soon" | "overdue" }[] {
  const out: { id: string; kind: "due soon" | "overdue" }[] = [];
  for (const o of orders) {
    if (!o.dueOn || !o.assigneeId || !isActive(o.state)) continue;
    if (o.dueOn < today) {
      if (!o.overdueNotifiedAt) out.push({ id: o.id, kind: "overdue" });
    } else if (o.dueOn <= addDays(today, 1) && !o.dueSoonNotifiedAt) {
      out.push({ id: o.id, kind: "due soon" });
    }
  }
  return out;
}

export interface Mail {
  subject: string;
  text: string;
}

export interface WorkOrderMailInfo {
  number: number;
  title: string;
  site: string;
  where: string;
  whatToCheck: string;
  dueOn: string | null;
  priority: string;
  url: string;
}

const SAFETY_LINE =
  "Safety: qualified persons only; DC stays live while the sun shines — lock out/tag out, wear arc-flash PPE, verify absence of voltage, and follow the site's procedures and local electrical codes.";

export function assignmentMail(w: WorkOrderMailInfo, assigneeName: string): Mail {
  return {
    subject: `${formatNumber(w.number)} assigned to you: ${w.title}`,
    text: [
      `Hello ${assigneeName},`,
      "",
      `${formatNumber(w.number)} at ${w.site} is now yours.`,
      `Where: ${w.where}`,
      `What to check: ${w.whatToCheck}`,
      `Priority: ${w.priority}${w.dueOn ? ` · due ${w.dueOn}` : ""}`,
      "",
      SAFETY_LINE,
      "",
      `Open it: ${w.url}`,
    ].join("\n"),
  };
}

export function dueMail(kind: "due soon" | "overdue", w: WorkOrderMailInfo): Mail {
  const head = kind === "overdue" ? `is overdue (was due ${w.dueOn})` : `is due ${w.dueOn}`;
  return {
    subject: `${formatNumber(w.number)} ${kind === "overdue" ? "is overdue" : "is due soon"}: ${w.title}`,
    text: [`${formatNumber(w.number)} at ${w.site} ${head}.`, `Where: ${w.where}`, `What to check: ${w.whatToCheck}`, "", `Open it: ${w.url}`].join("\n"),
  };
}

export interface DigestSite {
  site: string;
  url: string;
  newFlags: { combiner: string; stringsOut: number; lostKwhPerDay: number }[];
  needsFlight: number;
  done: { number: number; title: string; resolution: string | null }[];
}

export function digestIsEmpty(sites: readonly DigestSite[]): boolean {
  return sites.every((s) => s.newFlags.length === 0 && s.needsFlight === 0 && s.done.length === 0);
}

export function digestMail(day: string, sites: readonly DigestSite[]): Mail {
  const lines: string[] = [`What changed on your sites up to ${day}.`, ""];
  for (const s of sites) {
    if (s.newFlags.length === 0 && s.needsFlight === 0 && s.done.length === 0) continue;
    lines.push(`== ${s.site}`);
    if (s.newFlags.length) {
      lines.push(`New flags (${s.newFlags.length}):`);
      for (const f of s.newFlags.slice(0, 20))
        lines.push(`  - ${f.combiner}: ${f.stringsOut} string${f.stringsOut === 1 ? "" : "s"} out, ${f.lostKwhPerDay.toFixed(1)} kWh/day lost`);
      if (s.newFlags.length > 20) lines.push(`  … and ${s.newFlags.length - 20} more`);
    }
    if (s.needsFlight) lines.push(`Flags that need a drone flight: ${s.needsFlight}`);
    if (s.done.length) {
      lines.push(`Work orders done (${s.done.length}):`);
      for (const w of s.done.slice(0, 20)) lines.push(`  - ${formatNumber(w.number)} ${w.title}${w.resolution ? ` — found: ${w.resolution}` : ""}`);
    }
    lines.push(`Open the site: ${s.url}`, "");
  }
  const total = sites.reduce((n, s) => n + s.newFlags.length, 0);
  return { subject: `Sunsift daily digest ${day}: ${total} new flag${total === 1 ? "" : "s"}`, text: lines.join("\n") };
}

export function importMail(p: {
  ok: boolean;
  fileName: string;
  site: string;
  rowsAccepted: number;
  rowsRejected: number;
  error: string | null;
  url: string;
}): Mail {
  if (p.ok)
    return {
      subject: `Import finished: ${p.fileName}`,
      text: [
        `${p.fileName} is loaded into ${p.site}.`,
        `Rows loaded: ${p.rowsAccepted.toLocaleString("en")}; rows set aside: ${p.rowsRejected.toLocaleString("en")}${p.rowsRejected ? " (see the reject report)" : ""}.`,
        "",
        `Details: ${p.url}`,
      ].join("\n"),
    };
  return {
    subject: `Import failed: ${p.fileName}`,
    text: [`${p.fileName} could not be loaded into ${p.site}.`, `Why: ${p.error ?? "unknown"}`, "", `Details: ${p.url}`].join("\n"),
  };
}
