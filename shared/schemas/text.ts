/**
 * One-line names people type (presets, recipes, intakes, batches, people, fragment titles): no
 * control characters (C0, DEL and C1), which would break a file name, a CSV row or an e-mail header.
 */
// eslint-disable-next-line no-control-regex -- finding control characters is the point
export const CONTROL_CHARACTERS = /[\u0000-\u001f\u007f-\u009f]/;

export const oneLine = (what: string) => ({
  check: (v: string | null | undefined) => v == null || !CONTROL_CHARACTERS.test(v),
  message: { error: `Expected ${what} on one line, without control characters such as tabs or line breaks` },
});
