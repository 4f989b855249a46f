/**
 * The client's page URLs: one pattern per page. App.tsx routes by these patterns and every
 * link is built from them, so a page moves in one place (CONTRACT.md §7 names the ones other
 * tools rely on).
 *
 * @example
 * paths.replay({ slug: "kestrel-bank", id: 3 }, { query: { step: 12 } }) // "/layouts/kestrel-bank/sessions/3/replay?step=12"
 * <Route path={PAGES.replay} element={<ReplayPage />} />
 */
import { fillPattern, queryString, type PathParams, type QueryValues } from "@shared/contract/pathPattern";

export const PAGES = {
  login: "/login",
  setup: "/setup",
  forgotPassword: "/forgot-password",
  resetPassword: "/reset-password/:token",
  invite: "/invite/:token",
  /** A visitor display: no sign-in, no shell. */
  display: "/display/:token",
  layouts: "/",
  account: "/account",
  layout: "/layouts/:slug",
  layoutEdit: "/layouts/:slug/edit",
  junction: "/layouts/:slug/junction",
  rulebook: "/layouts/:slug/rulebook",
  simulate: "/layouts/:slug/simulate",
  placement: "/layouts/:slug/placement",
  live: "/layouts/:slug/live",
  alarms: "/layouts/:slug/alarms",
  sessions: "/layouts/:slug/sessions",
  replay: "/layouts/:slug/sessions/:id/replay",
  report: "/layouts/:slug/sessions/:id/report",
  audit: "/layouts/:slug/audit",
  displayLinks: "/layouts/:slug/display-links",
  outbox: "/admin/outbox",
  members: "/admin/members",
} as const;

export type Page = keyof typeof PAGES;

/** What follows the path: `?query` (undefined and empty values left out) and `#hash`. */
export interface PageExtras {
  query?: QueryValues;
  hash?: string;
}

type PageLink<P extends string> = keyof PathParams<P> extends never
  ? (params?: PathParams<P>, extras?: PageExtras) => string
  : (params: PathParams<P>, extras?: PageExtras) => string;

function link(pattern: string) {
  return (params: Record<string, string | number> = {}, { query, hash }: PageExtras = {}) => {
    return fillPattern(pattern, params) + queryString(query) + (hash ? `#${encodeURIComponent(hash)}` : "");
  };
}

type PageLinks = { [K in Page]: PageLink<(typeof PAGES)[K]> };

/** One link builder per page: `paths.live({ slug })`. Built from PAGES, so the cast only restores each page's parameter names. */
export const paths = Object.fromEntries(Object.entries(PAGES).map(([page, pattern]) => [page, link(pattern)])) as unknown as PageLinks;
