import { NavLink, Outlet, useMatch, useNavigate } from "react-router-dom";
import { useSociety } from "../../api/accounts";
import { useLogout } from "../../api/auth";
import { useCurrentUser } from "../../hooks/useCurrentUser";
import { can, ROLE_LABELS } from "../../lib/permissions";
import { SAFETY_TEXT } from "../ui/SafetyNote";
import { PAGES, paths } from "../../lib/paths";

const linkClass = ({ isActive }: { isActive: boolean }) =>
  `rounded-md px-3 py-1.5 text-sm font-semibold ${isActive ? "bg-panel-700 text-ink" : "text-ink-soft hover:bg-panel-800 hover:text-ink"}`;

/** Header, navigation for the signed-in role, and the operating-aid footer around every page. */
export function AppShell() {
  const user = useCurrentUser();
  const logout = useLogout();
  const society = useSociety();
  const navigate = useNavigate();
  const layoutMatch = useMatch(`${PAGES.layout}/*`);
  const slug = layoutMatch?.params.slug;

  const signOut = () => {
    logout.mutate(undefined, { onSettled: () => navigate(paths.login(), { replace: true }) });
  };

  return (
    <div className="flex min-h-screen flex-col">
      <header className="no-print border-b border-panel-700 bg-panel-900">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-3">
          <NavLink to={paths.layouts()} className="flex items-center gap-2 text-xl font-bold tracking-tight text-ink">
            <span aria-hidden="true" className="inline-block h-3 w-3 rounded-full bg-aspect-clear shadow-lamp text-aspect-clear" />
            Blocklight
            {society.data ? <span className="text-sm font-semibold tracking-normal text-ink-soft" data-society="true">{society.data}</span> : null}
          </NavLink>
          <nav aria-label="Main" className="flex flex-1 flex-wrap items-center gap-1">
            <NavLink to={paths.layouts()} end className={linkClass}>
              Layouts
            </NavLink>
            {slug ? (
              <>
                <span aria-hidden="true" className="px-1 text-ink-faint">
                  /
                </span>
                <NavLink to={paths.layout({ slug })} end className={linkClass}>
                  Overview
                </NavLink>
                <NavLink to={paths.layoutEdit({ slug })} className={linkClass}>
                  Workbench
                </NavLink>
                <NavLink to={paths.rulebook({ slug })} className={linkClass}>
                  {can.editRulebook(user.role) ? "Rulebook editor" : "Rulebook"}
                </NavLink>
                <NavLink to={paths.simulate({ slug })} className={linkClass}>
                  Simulator
                </NavLink>
                <NavLink to={paths.live({ slug })} className={linkClass}>
                  {can.controlLive(user.role) ? "Live control" : "Live mimic"}
                </NavLink>
                <NavLink to={paths.alarms({ slug })} className={linkClass}>
                  Alarms
                </NavLink>
                <NavLink to={paths.sessions({ slug })} className={linkClass}>
                  Sessions
                </NavLink>
              </>
            ) : null}
            {user.role === "admin" ? (
              <>
                <NavLink to={paths.members()} className={linkClass}>
                  Members
                </NavLink>
                <NavLink to={paths.outbox()} className={linkClass}>
                  Outbox
                </NavLink>
              </>
            ) : null}
          </nav>
          <div className="flex items-center gap-3 text-sm">
            <span>
              <NavLink to={paths.account()} className="font-semibold text-ink underline-offset-2 hover:underline" title="Your account: name, password, alarm mail">
                {user.name}
              </NavLink>{" "}
              <span className="rounded bg-panel-700 px-2 py-0.5 text-xs text-ink-soft" title="Your role">
                {ROLE_LABELS[user.role]}
              </span>
            </span>
            <button
              type="button"
              onClick={signOut}
              disabled={logout.isPending}
              className="rounded-md border border-panel-600 px-3 py-1 text-ink-soft hover:bg-panel-800 hover:text-ink"
            >
              Sign out
            </button>
          </div>
        </div>
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">
        <Outlet />
      </main>
      <footer className="no-print border-t border-panel-700 bg-panel-900 px-4 py-3 text-center text-xs text-ink-faint">
        {SAFETY_TEXT}
      </footer>
    </div>
  );
}
