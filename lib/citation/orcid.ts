// ORCID identifiers (C10 citation metadata). An ORCID iD is 16 characters in four groups of four, the last one a
// check character computed with ISO/IEC 7064 MOD 11-2 over the first 15 digits (ORCID's "Structure of the ORCID
// Identifier" support page describes the algorithm and gives 0000-0002-1825-0097 as its example). The canonical
// form is the https://orcid.org/ URI; people type the bare 16 characters too, with or without that prefix.

const ORCID_SHAPE = /^(\d{4})-?(\d{4})-?(\d{4})-?(\d{3}[\dX])$/;

/** The ISO 7064 MOD 11-2 check character ("0"–"9" or "X") of a string of base digits. */
export function mod11_2CheckChar(baseDigits: string): string {
  if (!/^\d+$/.test(baseDigits)) throw new RangeError('mod11_2CheckChar: base must be decimal digits');
  let total = 0;
  for (const ch of baseDigits) total = (total + Number(ch)) * 2;
  const result = (12 - (total % 11)) % 11;
  return result === 10 ? 'X' : String(result);
}

/**
 * The 16-character hyphenated form (`0000-0002-1825-0097`) of an ORCID iD typed by someone, or null when it does
 * not have the shape of one or its check character is wrong. Accepts the https://orcid.org/ (or http) prefix,
 * spaces and a lowercase x.
 */
export function normalizeOrcid(input: string): string | null {
  const bare = input
    .trim()
    .replace(/^https?:\/\/(www\.)?orcid\.org\//i, '')
    .replace(/\s+/g, '')
    .toUpperCase();
  const m = ORCID_SHAPE.exec(bare);
  if (!m) return null;
  const digits = `${m[1]}${m[2]}${m[3]}${m[4]}`;
  if (mod11_2CheckChar(digits.slice(0, 15)) !== digits[15]) return null;
  return `${m[1]}-${m[2]}-${m[3]}-${m[4]}`;
}

/** Why an ORCID iD was refused, in words (for the form). */
export function orcidProblem(input: string): string | null {
  const bare = input
    .trim()
    .replace(/^https?:\/\/(www\.)?orcid\.org\//i, '')
    .replace(/\s+/g, '')
    .toUpperCase();
  if (!ORCID_SHAPE.test(bare)) return 'An ORCID iD has 16 characters in four groups, e.g. 0000-0002-1825-0097.';
  if (normalizeOrcid(bare) === null)
    return 'The last character of this ORCID iD does not match its check digit (ISO 7064 MOD 11-2): look for a typo.';
  return null;
}

export const orcidUri = (orcid: string) => `https://orcid.org/${orcid}`;
