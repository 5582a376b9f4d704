import type { ReactNode } from "react";
import { Form, NavLink } from "react-router";
import { roleLabels, sections, type Role } from "~/lib/roles";

export function TanksideMark({ size = 36 }: { size?: number }) {
  // A tank seen from above with a float's looping path: the app's own mark.
  return (
    <svg width={size} height={size} viewBox="0 0 40 40" aria-hidden="true">
      <circle cx="20" cy="20" r="17" fill="none" stroke="currentColor" strokeWidth="3" />
      <path d="M9 24c4-9 14-11 17-5 2.5 5-3 9-7 6" fill="none" stroke="currentColor" strokeWidth="2.6" strokeLinecap="round" />
      <circle cx="19" cy="25" r="2.6" fill="currentColor" />
    </svg>
  );
}

export interface ShellUser {
  name: string;
  email: string;
  role: Role;
}

export function AppShell({ user, showMail, children }: { user: ShellUser | null; showMail: boolean; children: ReactNode }) {
  const visible = user
    ? sections
        .filter((s) => (s.roles as readonly Role[]).includes(user.role))
        // With a real relay nothing is captured, but the outbox still shows what went out.
        .map((s) => (s.key === "mail" && !showMail ? { ...s, label: "Outgoing mail" } : s))
    : [];
  return (
    <div className="flex min-h-screen flex-col">
      <header className="no-print bg-tank-800 text-white">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center justify-between gap-3 px-4 py-3">
          <NavLink to="/" className="flex items-center gap-3 text-white no-underline hover:text-tank-100">
            <TanksideMark />
            <span className="text-2xl font-bold tracking-wide">Tankside</span>
          </NavLink>
          {user ? (
            <div className="flex flex-wrap items-center gap-3">
              <NavLink to="/account" className="text-right leading-tight text-white no-underline hover:text-tank-100">
                <span className="block font-bold">{user.name}</span>
                <span className="block text-sm text-tank-100">{roleLabels[user.role]}</span>
              </NavLink>
              <Form method="post" action="/sign-out">
                <button className="min-h-12 rounded-lg border-2 border-tank-100 px-4 font-bold text-white hover:bg-tank-700">Sign out</button>
              </Form>
            </div>
          ) : null}
        </div>
        {user ? (
          <nav aria-label="Main" className="border-t border-tank-700 bg-tank-700">
            <ul className="mx-auto flex max-w-7xl flex-wrap gap-1 px-2">
              {visible.map((s) => (
                <li key={s.key}>
                  <NavLink
                    to={s.to}
                    end={s.to === "/"}
                    className={({ isActive }) =>
                      `block min-h-12 px-4 py-3 font-bold no-underline ${isActive ? "bg-paper text-tank-800" : "text-white hover:bg-tank-800 hover:text-white"}`
                    }
                  >
                    {s.label}
                  </NavLink>
                </li>
              ))}
            </ul>
          </nav>
        ) : null}
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">{children}</main>
      <footer className="no-print border-t border-line py-4 text-center text-sm text-muted">
        Tankside — keep hands clear of a turning table and water away from mains power; the lab's own safety rules and the equipment maker's instructions come
        first.
      </footer>
    </div>
  );
}
