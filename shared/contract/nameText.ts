/**
 * Names people give things (a detector, a layout, a member, the society) are shown on the
 * mimic, the visitor display, the printed rulebook, in mail and in CSV cells. So a name is
 * one line of visible text: no control characters (a tab, a line break, an escape sequence,
 * a bell) and no bidirectional overrides or isolates, which would make a name read as
 * something else than it is (U+202E turns "Main home" around on screen); not blank either.
 */
import { z } from "zod";

/** C0 and C1 control characters, the bidirectional embeddings/overrides and isolates. */
const HIDDEN_CHARACTERS = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/;

export const NAME_TEXT_MESSAGE = "must be one line of visible text: no tabs, line breaks, control characters or direction overrides";

/** A name of at most `max` characters, checked as above (add `.trim()` before where surrounding spaces are dropped). */
export const nameText = (max = 120, empty = "must not be empty") =>
  z
    .string()
    .min(1, empty)
    .max(max, `use at most ${max} characters`)
    .refine((s) => s.trim() !== "", "must not be blank")
    .refine((s) => !HIDDEN_CHARACTERS.test(s), NAME_TEXT_MESSAGE);

/** The same check for a schema that trims first (what people type in forms). */
export const trimmedNameText = (max: number, empty: string) =>
  z
    .string()
    .trim()
    .min(1, empty)
    .max(max, `use at most ${max} characters`)
    .refine((s) => !HIDDEN_CHARACTERS.test(s), NAME_TEXT_MESSAGE);
