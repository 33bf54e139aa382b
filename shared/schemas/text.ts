// Text rules shared by every schema. Names are shown in tables, files and
// e-mails: control characters (tabs, line breaks, escapes, NUL …) in them
// would break those or hide text, so names refuse them.
import { z } from 'zod'

// C0 controls, DEL and C1 controls, plus the Unicode line/paragraph separators and bidi overrides.
// eslint-disable-next-line no-control-regex
export const CONTROL_CHARS = /[\u0000-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/

export const hasNoControlChars = (v: string) => !CONTROL_CHARS.test(v)

/** A required, trimmed name of at most `max` characters without control characters. */
export const nameText = (max: number) => z.string().trim().min(1, 'is required').max(max, `is longer than ${max} characters`)
  .refine(hasNoControlChars, { message: 'must not contain control characters (tabs, line breaks …)' })
