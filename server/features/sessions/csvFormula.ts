/**
 * CSV cells a spreadsheet would run as a formula. A signaller's reason, a member's name or an
 * alarm's text is typed by a person and lands in a cell of the exports; opened in a
 * spreadsheet, `=HYPERLINK(…)` or `=cmd|…` there is run, not shown (CWE-1236). Such a text is
 * exported with one `'` in front, which spreadsheets take as "text" and do not show; the
 * import takes exactly one off again, so the round trip gives back what was typed (a text
 * that itself starts with `'` before one of these characters gets one more, for that reason).
 */
const FORMULA_START = /^'*[=+\-@\t\r]/;
const GUARDED = /^'+[=+\-@\t\r]/;

/** The text as a cell that opens as text. */
export const guardFormula = (text: string): string => (FORMULA_START.test(text) ? `'${text}` : text);

/** The text an exported cell stood for. */
export const unguardFormula = (cell: string): string => (GUARDED.test(cell) ? cell.slice(1) : cell);
