import { lazy, Suspense } from "react";
import { Route, Routes } from "react-router-dom";
import { AdminOnly } from "./components/shell/AdminOnly";
import { AppShell } from "./components/shell/AppShell";
import { RequireAuth } from "./components/shell/RequireAuth";
import { Loading } from "./components/ui/Status";
import { PAGES } from "./lib/paths";

// Every page is its own chunk so the first load carries only the shell and the page in view.
const LoginPage = lazy(() => import("./pages/LoginPage"));
const LayoutsPage = lazy(() => import("./pages/LayoutsPage"));
const LayoutOverviewPage = lazy(() => import("./pages/LayoutOverviewPage"));
const RulebookPage = lazy(() => import("./pages/RulebookPage"));
const SimulatePage = lazy(() => import("./pages/SimulatePage"));
const LivePage = lazy(() => import("./pages/LivePage"));
const DisplayPage = lazy(() => import("./pages/DisplayPage"));
const NotFoundPage = lazy(() => import("./pages/NotFoundPage"));
const AlarmsPage = lazy(() => import("./pages/AlarmsPage"));
const AuditPage = lazy(() => import("./pages/AuditPage"));
const DisplayLinksPage = lazy(() => import("./pages/DisplayLinksPage"));
const OutboxPage = lazy(() => import("./pages/OutboxPage"));
const MembersPage = lazy(() => import("./pages/MembersPage"));
const InvitePage = lazy(() => import("./pages/InvitePage"));
const PlacementPage = lazy(() => import("./pages/PlacementPage"));
const SessionsPage = lazy(() => import("./pages/SessionsPage"));
const ReplayPage = lazy(() => import("./pages/ReplayPage"));
const LayoutEditPage = lazy(() => import("./pages/LayoutEditPage"));
const JunctionPage = lazy(() => import("./pages/JunctionPage"));
const SetupPage = lazy(() => import("./pages/SetupPage"));
const AccountPage = lazy(() => import("./pages/AccountPage"));
const ForgotPasswordPage = lazy(() => import("./pages/ForgotPasswordPage"));
const ResetPasswordPage = lazy(() => import("./pages/ResetPasswordPage"));
// Carries the charting library: loaded only when a report is opened.
const ReportPage = lazy(() => import("./pages/ReportPage"));

/** The one route table; its patterns are lib/paths.ts's, which every link is built from (CONTRACT.md §7 names the paths other tools rely on). */
export function App() {
  return (
    <Suspense fallback={<Loading what="page" />}>
      <Routes>
        <Route path={PAGES.login} element={<LoginPage />} />
        {/* Visitors hold a display link, not an account: no sign-in, no shell. */}
        <Route path={PAGES.display} element={<DisplayPage />} />
        <Route path={PAGES.invite} element={<InvitePage />} />
        <Route path={PAGES.setup} element={<SetupPage />} />
        <Route path={PAGES.forgotPassword} element={<ForgotPasswordPage />} />
        <Route path={PAGES.resetPassword} element={<ResetPasswordPage />} />
        <Route
          element={
            <RequireAuth>
              <AppShell />
            </RequireAuth>
          }
        >
          <Route index element={<LayoutsPage />} />
          <Route path={PAGES.layout} element={<LayoutOverviewPage />} />
          <Route path={PAGES.layoutEdit} element={<LayoutEditPage />} />
          <Route path={PAGES.junction} element={<JunctionPage />} />
          <Route path={PAGES.rulebook} element={<RulebookPage />} />
          <Route path={PAGES.simulate} element={<SimulatePage />} />
          <Route path={PAGES.placement} element={<PlacementPage />} />
          <Route path={PAGES.live} element={<LivePage />} />
          <Route path={PAGES.alarms} element={<AlarmsPage />} />
          <Route path={PAGES.sessions} element={<SessionsPage />} />
          <Route path={PAGES.replay} element={<ReplayPage />} />
          <Route path={PAGES.report} element={<ReportPage />} />
          <Route path={PAGES.audit} element={<AuditPage />} />
          <Route path={PAGES.account} element={<AccountPage />} />
          {/* Admin pages show non-admins only "this page is for admins", and run none of their queries. */}
          <Route
            path={PAGES.displayLinks}
            element={
              <AdminOnly action="display-links.manage">
                <DisplayLinksPage />
              </AdminOnly>
            }
          />
          <Route
            path={PAGES.outbox}
            element={
              <AdminOnly action="outbox.read">
                <OutboxPage />
              </AdminOnly>
            }
          />
          <Route
            path={PAGES.members}
            element={
              <AdminOnly action="members.manage">
                <MembersPage />
              </AdminOnly>
            }
          />
          <Route path="*" element={<NotFoundPage />} />
        </Route>
      </Routes>
    </Suspense>
  );
}
