import { NavLink, useRouteLoaderData } from "react-router";

const tabs = [
  { to: "/settings", label: "Users", end: true },
  { to: "/settings/tokens", label: "API tokens", end: false },
  { to: "/settings/outbox", label: "Outbox", end: false, demoOnly: true },
  { to: "/settings/inspection", label: "Inspection", end: false },
  { to: "/settings/notifications", label: "My e-mails", end: false },
  { to: "/settings/audit", label: "Audit trail", end: false },
];

export function SettingsTabs() {
  // The outbox exists only in the demo (SUNSIFT_DEMO=1); the app layout's loader says which.
  const demo = useRouteLoaderData<{ demo?: boolean }>("routes/app-layout")?.demo === true;
  return (
    <div className="flex gap-2 border-b border-line" role="tablist">
      {tabs.filter((t) => demo || !t.demoOnly).map((t) => (
        <NavLink key={t.to} to={t.to} end={t.end} className={({ isActive }) => `-mb-px border-b-2 px-3 py-2 text-sm font-medium ${isActive ? "border-brand text-brand" : "border-transparent text-muted"}`}>
          {t.label}
        </NavLink>
      ))}
    </div>
  );
}
