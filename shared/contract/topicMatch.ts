/**
 * MQTT topic-filter matching (OASIS MQTT 3.1.1 §4.7), used by the broker's access rules.
 * Pure: no I/O. Checked against the standard's own examples in tests/standards/topicMatch.test.ts.
 */

/**
 * Is `filter` a valid topic filter? `#` only as the whole last level, `+` only as a whole level.
 *
 * @example
 * isValidFilter("sport/tennis/#") // true
 * isValidFilter("sport/tennis#")  // false
 */
export function isValidFilter(filter: string): boolean {
  if (filter.length === 0) return false;
  const levels = filter.split("/");
  for (let i = 0; i < levels.length; i++) {
    const level = levels[i];
    if (level.includes("#") && (level !== "#" || i !== levels.length - 1)) return false;
    if (level.includes("+") && level !== "+") return false;
  }
  return true;
}

/** Is `topic` a valid topic name to publish to (non-empty, no wildcards)? */
export function isValidTopicName(topic: string): boolean {
  return topic.length > 0 && !topic.includes("+") && !topic.includes("#");
}

/**
 * Does the topic name match the filter? Topics starting with `$` are never matched by a
 * filter whose first level is a wildcard (§4.7.2).
 *
 * @example
 * topicMatches("sport/tennis/+", "sport/tennis/player1") // true
 * topicMatches("sport/+", "sport")                        // false
 */
export function topicMatches(filter: string, topic: string): boolean {
  if (!isValidFilter(filter) || !isValidTopicName(topic)) return false;
  const f = filter.split("/");
  const t = topic.split("/");
  if (topic.startsWith("$") && (f[0] === "+" || f[0] === "#")) return false;
  for (let i = 0; i < f.length; i++) {
    if (f[i] === "#") return true; // also matches the parent level: "sport/#" matches "sport"
    if (i >= t.length) return false;
    if (f[i] !== "+" && f[i] !== t[i]) return false;
  }
  return f.length === t.length;
}

/**
 * Is every topic that `filter` can match also matched by `allowed`? Used to decide whether a
 * client may subscribe to `filter` when it is allowed `allowed` (e.g. a board asking for
 * `blocklight/v1/kestrel-bank/signal/+/aspect` under `blocklight/v1/kestrel-bank/signal/#`).
 */
export function filterWithin(filter: string, allowed: string): boolean {
  if (!isValidFilter(filter) || !isValidFilter(allowed)) return false;
  const f = filter.split("/");
  const a = allowed.split("/");
  // A "$" topic is matched by a filter's first wildcard level on neither side.
  for (let i = 0; i < a.length; i++) {
    if (a[i] === "#") return !(i === 0 && f[0].startsWith("$"));
    if (i >= f.length) return false;
    if (f[i] === "#") return false; // the filter reaches further than `allowed` permits
    if (a[i] === "+") {
      if (i === 0 && f[0].startsWith("$")) return false;
      continue;
    }
    if (f[i] !== a[i]) return false; // a literal in `allowed` needs the same literal
  }
  return f.length === a.length;
}
