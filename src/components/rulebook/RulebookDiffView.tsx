import { useId, useMemo, useState, type ReactNode } from "react";
import type { RulebookVersionDetail, RulebookVersionSummary } from "@shared/contract/rest";
import { describeTriggerAlone } from "@shared/rulebook/describe";
import {
  countChanges,
  diffRulebooks,
  type Change,
  type ProvingChange,
  type RuleChange,
  type RuleMove,
  type RulePartChange,
  type SelectorDeclaration,
} from "@shared/rulebook/diff";
import { rulebookSchema, type ProvingRoute, type Rulebook } from "@shared/rulebook/schema";
import { useRulebookVersion } from "../../api/rulebooks";
import { readDraft } from "../../lib/draftStore";
import { Panel } from "../ui/Panel";
import { LoadError, Loading } from "../ui/Status";

const DRAFT = "draft";

type Kind = "added" | "removed" | "changed" | "moved";

// Colour is never the only sign: every entry also says in words what happened to it.
const KIND_STYLE: Record<Kind, { item: string; badge: string }> = {
  added: { item: "border-aspect-clear/70 bg-aspect-clear/5", badge: "text-aspect-clear" },
  removed: { item: "border-aspect-danger/70 bg-aspect-danger/5", badge: "text-aspect-danger" },
  changed: { item: "border-aspect-caution/70 bg-aspect-caution/5", badge: "text-aspect-caution" },
  moved: { item: "border-aspect-caution/70 bg-aspect-caution/5", badge: "text-aspect-caution" },
};

function Entry({ kind, title, children }: { kind: Kind; title: ReactNode; children?: ReactNode }) {
  const style = KIND_STYLE[kind];
  return (
    <li className={`rounded-md border-l-4 p-2 ${style.item}`}>
      <p className="flex flex-wrap items-baseline gap-2 text-sm">
        <span className={`text-xs font-bold uppercase ${style.badge}`}>{kind}</span>
        <span>{title}</span>
      </p>
      {children ? <div className="mt-1 space-y-1 text-sm">{children}</div> : null}
    </li>
  );
}

function OldNew({ before, after }: { before: ReactNode; after: ReactNode }) {
  return (
    <p className="leading-relaxed">
      <span className="text-ink-soft line-through decoration-aspect-danger/70">{before}</span>
      <span aria-hidden="true" className="px-2 text-ink-faint">
        →
      </span>
      <span className="sr-only"> becomes </span>
      <span className="text-ink">{after}</span>
    </p>
  );
}

/** A list of changes to named declarations, each value put in words by `words`. */
function NamedChanges<T>({ changes, noun, words }: { changes: Change<T>[]; noun: string; words: (value: T) => string }) {
  return changes.map((c) => (
    <Entry
      key={`${noun}-${c.name}`}
      kind={c.change}
      title={
        <>
          {noun} <code className="text-brass">{c.name}</code>
          {c.change === "added" ? `: ${words(c.after)}` : c.change === "removed" ? ` (was ${words(c.before)})` : null}
        </>
      }
    >
      {c.change === "changed" ? <OldNew before={words(c.before)} after={words(c.after)} /> : null}
    </Entry>
  ));
}

const latchWords = (on: boolean) => (on ? "starts set" : "starts clear");
const counterWords = (n: number) => `starts at ${n}`;
const selectorWords = (s: SelectorDeclaration) => `one of ${s.values.join(" / ")}, starts ${s.initial}`;
const aspectWords = (aspect: string) => `starts at ${aspect}`;
const routeWords = (r: ProvingRoute) =>
  `signal ${r.signal}, approach ${r.approach.join(", ")}, entry ${r.entry}, exit ${r.exit.join(", ")}`;
// describe.ts words a trigger only inside a whole rule; take it from a rule that does nothing.

const PART_LABEL: Record<RulePartChange["part"], string> = {
  trigger: "Trigger",
  condition: "Condition",
  actions: "Actions",
  note: "Note",
};

function partWords(part: RulePartChange, side: "before" | "after"): string {
  if (part.part === "trigger") return describeTriggerAlone(part[side]);
  if (part.part === "actions") return part[side].length ? part[side].join(", ") : "do nothing";
  if (part.part === "condition") return part[side] ?? "no condition";
  return part[side] ?? "no note";
}

function RuleEntry({ change }: { change: RuleChange }) {
  const title = (
    <>
      rule <code className="text-brass">{change.id}</code> ({change.change === "removed" ? "was" : "now"} rule {change.position})
    </>
  );
  if (change.change !== "changed") {
    return (
      <Entry kind={change.change} title={title}>
        <p className="leading-relaxed">{change.sentence}</p>
      </Entry>
    );
  }
  return (
    <Entry kind="changed" title={<>{title}: {change.parts.map((p) => PART_LABEL[p.part].toLowerCase()).join(", ")} changed</>}>
      <OldNew before={change.before} after={change.after} />
      <dl className="grid gap-x-3 text-xs sm:grid-cols-[max-content_1fr]">
        {change.parts.map((part) => (
          <div key={part.part} className="contents">
            <dt className="font-semibold text-ink-soft">{PART_LABEL[part.part]}</dt>
            <dd>
              <OldNew before={partWords(part, "before")} after={partWords(part, "after")} />
            </dd>
          </div>
        ))}
      </dl>
    </Entry>
  );
}

function MoveEntry({ move }: { move: RuleMove }) {
  return (
    <Entry
      kind="moved"
      title={
        <>
          rule <code className="text-brass">{move.id}</code> moved from place {move.from} to place {move.to}
        </>
      }
    >
      {move.standing ? (
        <p className="text-ink-soft">A standing rule: standing rules settle in rule order, so this can change which one acts first.</p>
      ) : null}
    </Entry>
  );
}

const SETTING_NOUN = { priority: "priority route", maxAxles: "most axles per train", maxTrainsPerRoute: "most trains per route" };

function ProvingEntry({ change }: { change: ProvingChange }) {
  if (change.what === "block") {
    return <Entry kind={change.change} title={change.change === "added" ? "proving facts added" : "proving facts removed"} />;
  }
  if (change.what === "conflict") {
    return <Entry kind={change.change} title={`conflict: routes ${change.routes[0]} and ${change.routes[1]} may not be set together`} />;
  }
  if (change.what === "route") {
    return <NamedChanges changes={[change]} noun="proving route" words={routeWords} />;
  }
  const noun = SETTING_NOUN[change.name];
  if (change.change === "changed") {
    return (
      <Entry kind="changed" title={noun}>
        <OldNew before={String(change.before)} after={String(change.after)} />
      </Entry>
    );
  }
  return <Entry kind={change.change} title={`${noun}: ${change.change === "added" ? change.after : `was ${change.before}`}`} />;
}

function Section({ title, children, count }: { title: string; children: ReactNode; count: number }) {
  if (count === 0) return null;
  return (
    <section aria-label={title} className="space-y-2">
      <h3 className="text-sm font-bold text-ink-soft">{title}</h3>
      <ul className="space-y-2">{children}</ul>
    </section>
  );
}

/** The readable list of what changed from `before` to `after`. */
export function RulebookDiffList({ before, after, beforeLabel, afterLabel }: { before: Rulebook; after: Rulebook; beforeLabel: string; afterLabel: string }) {
  const diff = useMemo(() => diffRulebooks(before, after), [before, after]);
  const total = countChanges(diff);
  const declarations = diff.latches.length + diff.counters.length + diff.selectors.length + diff.initial.length;
  if (total === 0) {
    return <p className="text-sm text-ink-soft">{beforeLabel} and {afterLabel} are the same: no declaration, rule, order or proving fact differs.</p>;
  }
  return (
    <div className="space-y-4">
      <p className="text-sm text-ink-soft">
        From {beforeLabel} to {afterLabel}: {total} {total === 1 ? "change" : "changes"}.
      </p>
      <Section title="Latches, counters, selectors and starting aspects" count={declarations}>
        <NamedChanges changes={diff.latches} noun="latch" words={latchWords} />
        <NamedChanges changes={diff.counters} noun="counter" words={counterWords} />
        <NamedChanges changes={diff.selectors} noun="selector" words={selectorWords} />
        <NamedChanges changes={diff.initial} noun="signal" words={aspectWords} />
      </Section>
      <Section title="Rules" count={diff.rules.length}>
        {diff.rules.map((change) => (
          <RuleEntry key={`${change.change}-${change.id}`} change={change} />
        ))}
      </Section>
      <Section title="Rule order" count={diff.moved.length}>
        {diff.moved.map((move) => (
          <MoveEntry key={move.id} move={move} />
        ))}
      </Section>
      <Section title="Proving facts" count={diff.proving.length}>
        {diff.proving.map((change, index) => (
          // Proving entries have no single id (a conflict is a pair); their order is fixed by the diff.
          <ProvingEntry key={index} change={change} />
        ))}
      </Section>
    </div>
  );
}

type DraftRead = { ok: true; rulebook: Rulebook; basedOn: number | null } | { ok: false; message: string } | null;

function readDraftRulebook(slug: string): DraftRead {
  const draft = readDraft(slug);
  if (!draft) return null;
  try {
    const parsed = rulebookSchema.safeParse(JSON.parse(draft.text));
    return parsed.success
      ? { ok: true, rulebook: parsed.data, basedOn: draft.basedOn }
      : { ok: false, message: "The unsaved draft does not have the shape of a rulebook yet; fix it in the editor to compare." };
  } catch {
    return { ok: false, message: "The unsaved draft is not valid JSON yet; fix it in the editor to compare." };
  }
}

interface RulebookDiffViewProps {
  slug: string;
  versions: RulebookVersionSummary[];
  /** The version shown on the page; the chosen one is compared against it. */
  current: RulebookVersionDetail;
}

/**
 * "Compare with…": pick another stored version, or this tab's unsaved draft, and see what
 * differs from the version on the page. The older version is always the "before" side; the
 * draft is always the "after" side.
 */
export function RulebookDiffView({ slug, versions, current }: RulebookDiffViewProps) {
  const selectId = useId();
  const [choice, setChoice] = useState("");
  // The editor keeps its draft in sessionStorage as you type; read it again whenever the picker is used.
  const [draft, setDraft] = useState<DraftRead>(() => readDraftRulebook(slug));
  const refreshDraft = () => setDraft(readDraftRulebook(slug));

  const others = useMemo(
    () => versions.filter((v) => v.version !== current.version).sort((a, b) => b.version - a.version),
    [versions, current.version],
  );
  const otherVersion = choice && choice !== DRAFT ? Number(choice) : undefined;
  const other = useRulebookVersion(slug, otherVersion);

  let body: ReactNode = null;
  if (choice === DRAFT) {
    if (!draft) body = <p className="text-sm text-ink-faint">There is no unsaved draft in this tab.</p>;
    else if (!draft.ok) body = <p className="text-sm text-notice-error">{draft.message}</p>;
    else body = <RulebookDiffList before={current.rulebook} after={draft.rulebook} beforeLabel={`v${current.version}`} afterLabel="the unsaved draft" />;
  } else if (otherVersion !== undefined) {
    if (other.isPending) body = <Loading what={`rulebook version ${otherVersion}`} />;
    else if (other.isError) body = <LoadError error={other.error} what={`rulebook version ${otherVersion}`} />;
    else {
      const older = other.data.version < current.version ? other.data : current;
      const newer = older === current ? other.data : current;
      body = <RulebookDiffList before={older.rulebook} after={newer.rulebook} beforeLabel={`v${older.version}`} afterLabel={`v${newer.version}`} />;
    }
  }

  return (
    <Panel title={`Compare v${current.version}`} className="no-print">
      <div className="mb-3 flex flex-wrap items-center gap-2">
        <label htmlFor={selectId} className="text-sm font-semibold text-ink-soft">
          Compare with…
        </label>
        <select
          id={selectId}
          value={choice}
          onFocus={refreshDraft}
          onChange={(event) => {
            refreshDraft();
            setChoice(event.target.value);
          }}
          className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1.5 text-sm text-ink"
        >
          <option value="">choose a version</option>
          {others.map((v) => (
            <option key={v.version} value={String(v.version)}>
              v{v.version} ({v.status}
              {v.live ? ", live" : ""})
            </option>
          ))}
          {draft || choice === DRAFT ? (
            <option value={DRAFT}>unsaved draft{draft?.ok && draft.basedOn !== null ? ` (based on v${draft.basedOn})` : ""}</option>
          ) : null}
        </select>
      </div>
      {body}
    </Panel>
  );
}
