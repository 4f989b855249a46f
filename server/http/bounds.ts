/**
 * Bounds of values that go to PostgreSQL as they are. (Bodies as a whole — NUL characters and
 * nesting depth — are checked once, in bodyGuard.ts.)
 */
import { z } from "zod";

/** PostgreSQL's bigint (event ids). */
export const BIGINT_MAX = 9223372036854775807n;

/** An event id as text: digits that fit PostgreSQL's bigint. */
export const eventIdText = z
  .string()
  .regex(/^\d{1,19}$/, "an event id")
  // zod runs this even when the pattern failed: only digits are compared.
  .refine((s) => !/^\d+$/.test(s) || BigInt(s) <= BIGINT_MAX, `an event id is at most ${BIGINT_MAX}`);
