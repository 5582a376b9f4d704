import { useEffect, useRef, useState, type ReactNode } from "react";
import { Form, NavLink, useLocation } from "react-router";
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

/** The sections a person may open, as links; the same list in the wide bar and the phone menu. */
function SectionLinks({ sections, stacked }: { sections: readonly { key: string; label: string; to: string }[]; stacked: boolean }) {
  return (
    <ul className={stacked ? "flex flex-col py-1" : "mx-auto flex max-w-7xl flex-wrap gap-1 px-2"}>
      {sections.map((s) => (
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
  );
}

function AccountLink({ user }: { user: ShellUser }) {
  return (
    <NavLink to="/account" className="block leading-tight text-white no-underline hover:text-tank-100 md:text-right">
      <span className="block font-bold">{user.name}</span>
      <span className="block text-sm text-tank-100">{roleLabels[user.role]}</span>
    </NavLink>
  );
}

function SignOut() {
  return (
    <Form method="post" action="/sign-out">
      <button className="min-h-12 rounded-lg border-2 border-tank-100 px-4 font-bold text-white hover:bg-tank-700">Sign out</button>
    </Form>
  );
}

/**
 * The navigation on a phone: a disclosure that opens the sections, the account and sign-out below
 * the bar. A `<details>`, so it opens without script too; with script its button also says whether
 * it is open (aria-expanded), Escape closes it, and it closes when a link in it is followed.
 */
function PhoneMenu({ user, sections }: { user: ShellUser; sections: readonly { key: string; label: string; to: string }[] }) {
  const [open, setOpen] = useState(false);
  const details = useRef<HTMLDetailsElement>(null);
  const summary = useRef<HTMLElement>(null);
  const { pathname, search } = useLocation();
  useEffect(() => {
    if (details.current) details.current.open = false;
  }, [pathname, search]);
  useEffect(() => {
    if (!open) return;
    const closeOnEscape = (e: KeyboardEvent) => {
      if (e.key !== "Escape" || !details.current) return;
      details.current.open = false;
      summary.current?.focus();
    };
    document.addEventListener("keydown", closeOnEscape);
    return () => document.removeEventListener("keydown", closeOnEscape);
  }, [open]);
  return (
    <details ref={details} className="md:hidden" onToggle={(e) => setOpen(e.currentTarget.open)}>
      <summary
        ref={summary}
        aria-expanded={open}
        aria-controls="phone-menu"
        className="flex min-h-12 cursor-pointer list-none items-center gap-2 rounded-lg border-2 border-tank-100 [&::-webkit-details-marker]:hidden px-4 font-bold text-white hover:bg-tank-700"
      >
        <svg width="20" height="20" viewBox="0 0 20 20" aria-hidden="true">
          <path d="M3 5h14M3 10h14M3 15h14" stroke="currentColor" strokeWidth="2.4" strokeLinecap="round" />
        </svg>
        Menu
      </summary>
      <div id="phone-menu" className="absolute inset-x-0 z-30 mt-3 border-t border-tank-700 bg-tank-700 shadow-lg">
        <nav aria-label="Main">
          <SectionLinks sections={sections} stacked />
        </nav>
        <div className="flex flex-wrap items-center justify-between gap-3 border-t border-tank-800 bg-tank-800 px-4 py-3">
          <AccountLink user={user} />
          <SignOut />
        </div>
      </div>
    </details>
  );
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
      {/* The first thing a keyboard reaches: past the header's links to the page itself. */}
      <a href="#main" className="sr-only z-50 rounded-lg bg-sheet px-4 py-3 font-bold text-tank-800 focus:not-sr-only focus:absolute focus:top-2 focus:left-2">
        Skip to the page
      </a>
      <header className="no-print relative bg-tank-800 text-white">
        <div className="mx-auto flex max-w-7xl items-center justify-between gap-3 px-4 py-3">
          <NavLink to="/" className="flex items-center gap-3 text-white no-underline hover:text-tank-100">
            <TanksideMark />
            <span className="text-2xl font-bold tracking-wide">Tankside</span>
          </NavLink>
          {user ? (
            <>
              <div className="hidden items-center gap-3 md:flex">
                <AccountLink user={user} />
                <SignOut />
              </div>
              <PhoneMenu user={user} sections={visible} />
            </>
          ) : null}
        </div>
        {user ? (
          <nav aria-label="Main" className="hidden border-t border-tank-700 bg-tank-700 md:block">
            <SectionLinks sections={visible} stacked={false} />
          </nav>
        ) : null}
      </header>
      <main id="main" tabIndex={-1} className="mx-auto w-full max-w-7xl flex-1 px-4 py-6 focus:outline-none">
        {children}
      </main>
      <footer className="no-print border-t border-line py-4 text-center text-sm text-muted">
        Tankside — keep hands clear of a turning table and water away from mains power; the lab's own safety rules and the equipment maker's instructions come
        first.
      </footer>
    </div>
  );
}
