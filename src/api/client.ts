/**
 * The one typed way to call the API: a route's name from the REST map
 * (shared/contract/restMap.ts) picks its path parameters, body, query and reply type.
 *
 * @example
 * api("GET /api/layouts/:slug", { slug, signal })                      // Promise<LayoutResponse>
 * api("POST /api/alarms/:id/acknowledge", { id, body: { comment } })  // Promise<AcknowledgeResponse>
 * apiUrl("GET /api/sessions/:id/events", { id, query: { format: "csv" } }) // a download link
 */
import { fillPattern, queryString, type PathParams, type QueryValues } from "@shared/contract/pathPattern";
import { splitRoute, type BodyOf, type DownloadOf, type PatternOf, type QueryOf, type QueryOptional, type ReplyOf, type RestRoute } from "@shared/contract/restMap";
import { request } from "./http";

type Nothing = Record<never, never>;
type BodyPart<K extends RestRoute> = [BodyOf<K>] extends [never] ? Nothing : { body: BodyOf<K> };
type QueryPart<K extends RestRoute> = [QueryOf<K>] extends [never] ? Nothing : QueryOptional<K> extends true ? { query?: QueryOf<K> } : { query: QueryOf<K> };

export type ApiOptions<K extends RestRoute> = PathParams<PatternOf<K>> & BodyPart<K> & QueryPart<K> & { signal?: AbortSignal };
/** The options argument, optional when the route needs nothing (`api("GET /api/me")`). */
type OptionsArg<O> = Nothing extends O ? [options?: O] : [options: O];

/** What the typed options are at run time. */
interface LooseOptions {
  body?: unknown;
  query?: QueryValues;
  signal?: AbortSignal;
  [param: string]: unknown;
}

function urlOf(pattern: string, { body: _body, query, signal: _signal, ...params }: LooseOptions): string {
  return fillPattern(pattern, params as Record<string, string | number>) + queryString(query);
}

export function api<K extends RestRoute>(route: K, ...[options]: OptionsArg<ApiOptions<K>>): Promise<ReplyOf<K>> {
  const { method, pattern } = splitRoute(route);
  const loose = (options ?? {}) as LooseOptions;
  // A POST without a body still sends `{}`: JSON routes read an empty object, not nothing.
  const body = loose.body ?? (method === "GET" || method === "DELETE" ? undefined : {});
  return request<ReplyOf<K>>(urlOf(pattern, loose), { method, body, signal: loose.signal });
}

type DownloadPart<K extends RestRoute> = [DownloadOf<K>] extends [never] ? QueryPart<K> : { query: DownloadOf<K> };
export type UrlOptions<K extends RestRoute> = PathParams<PatternOf<K>> & DownloadPart<K>;

/** The URL of a GET route, for a link the browser follows itself (downloads send the session cookie). */
export function apiUrl<K extends RestRoute>(route: K, ...[options]: OptionsArg<UrlOptions<K>>): string {
  return urlOf(splitRoute(route).pattern, (options ?? {}) as LooseOptions);
}
