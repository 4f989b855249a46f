/**
 * Path patterns in Express / React Router form (`/layouts/:slug/sessions/:id`) and the one way
 * to fill them in. The REST map (restMap.ts) and the client's page paths (src/lib/paths.ts)
 * both name their URLs by pattern, so the pattern a router matches is the string a caller
 * fills, and a missing parameter is a type error.
 *
 * @example
 * fillPattern("/layouts/:slug/sessions/:id", { slug: "kestrel-bank", id: 3 }) // "/layouts/kestrel-bank/sessions/3"
 */

/** The `:name` parameters of a pattern, as a union of their names. */
export type ParamNames<P extends string> = P extends `${string}:${infer Name}/${infer Rest}`
  ? Name | ParamNames<`/${Rest}`>
  : P extends `${string}:${infer Name}`
    ? Name
    : never;

/** The values a pattern needs: one per `:name` (an empty object when it has none). */
export type PathParams<P extends string> = { [N in ParamNames<P>]: string | number };

/** Values of a query string; `undefined` or `""` leaves the key out (an empty filter means "any"). */
export type QueryValues = Record<string, string | number | boolean | undefined>;

/** The pattern with each `:name` replaced by its value, URL-encoded. */
export function fillPattern<P extends string>(pattern: P, params: PathParams<P>): string {
  const values = params as Record<string, string | number>;
  return pattern.replace(/:([A-Za-z]+)/g, (_match, name: string) => {
    const value = values[name];
    // Only reachable past the types (a cast or `any`): a URL with "undefined" in it would be worse.
    if (value === undefined) throw new Error(`${pattern}: no value for :${name}`);
    return encodeURIComponent(String(value));
  });
}

/** `?a=1&b=x` for the values given (empty when there are none). */
export function queryString(query: QueryValues | undefined): string {
  if (!query) return "";
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(query)) if (value !== undefined && value !== "") search.set(key, String(value));
  const text = search.toString();
  return text ? `?${text}` : "";
}
