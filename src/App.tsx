import { lazy, Suspense } from "react";
import { Route, Routes } from "react-router-dom";
import { AdminOnly } from "./components/shell/AdminOnly";
import { AppShell } from "./components/shell/AppShell";
import { RequireAuth } from "./components/shell/RequireAuth";
import { Loading } from "./components/ui/Status";

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
const SetupPage = lazy(() => import("./pages/SetupPage"));
const AccountPage = lazy(() => import("./pages/AccountPage"));
const ForgotPasswordPage = lazy(() => import("./pages/ForgotPasswordPage"));
const ResetPasswordPage = lazy(() => import("./pages/ResetPasswordPage"));
// Carries the charting library: loaded only when a report is opened.
const ReportPage = lazy(() => import("./pages/ReportPage"));

/** The one route table (CONTRACT.md §7 names the paths other tools rely on). */
export function App() {
  return (
    <Suspense fallback={<Loading what="page" />}>
      <Routes>
        <Route path="/login" element={<LoginPage />} />
        {/* Visitors hold a display link, not an account: no sign-in, no shell. */}
        <Route path="/display/:token" element={<DisplayPage />} />
        <Route path="/invite/:token" element={<InvitePage />} />
        <Route path="/setup" element={<SetupPage />} />
        <Route path="/forgot-password" element={<ForgotPasswordPage />} />
        <Route path="/reset-password/:token" element={<ResetPasswordPage />} />
        <Route
          element={
            <RequireAuth>
              <AppShell />
            </RequireAuth>
          }
        >
          <Route index element={<LayoutsPage />} />
          <Route path="layouts/:slug" element={<LayoutOverviewPage />} />
          <Route path="layouts/:slug/rulebook" element={<RulebookPage />} />
          <Route path="layouts/:slug/simulate" element={<SimulatePage />} />
          <Route path="layouts/:slug/placement" element={<PlacementPage />} />
          <Route path="layouts/:slug/live" element={<LivePage />} />
          <Route path="layouts/:slug/alarms" element={<AlarmsPage />} />
          <Route path="layouts/:slug/sessions" element={<SessionsPage />} />
          <Route path="layouts/:slug/sessions/:id/replay" element={<ReplayPage />} />
          <Route path="layouts/:slug/sessions/:id/report" element={<ReportPage />} />
          <Route path="layouts/:slug/audit" element={<AuditPage />} />
          <Route path="account" element={<AccountPage />} />
          {/* Admin pages show non-admins only "this page is for admins", and run none of their queries. */}
          <Route
            path="layouts/:slug/display-links"
            element={
              <AdminOnly action="display-links.manage">
                <DisplayLinksPage />
              </AdminOnly>
            }
          />
          <Route
            path="admin/outbox"
            element={
              <AdminOnly action="outbox.read">
                <OutboxPage />
              </AdminOnly>
            }
          />
          <Route
            path="admin/members"
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
