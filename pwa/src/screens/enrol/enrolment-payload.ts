// What an enrolment QR code may hold: a link to this app's enrol screen with #code= (the
// server's form: a fragment never reaches a server log) or ?code=, a small
// JSON object with a `code`, or the bare code. Codes are read in upper case without spaces.
export function parseEnrolmentPayload(text: string): string | null {
  const raw = text.trim();
  if (!raw) return null;
  try {
    const url = new URL(raw);
    const code = codeInLink(url.hash, url.search);
    if (code) return normaliseCode(code);
  } catch {
    // Not a link.
  }
  if (raw.startsWith('{')) {
    try {
      const { code } = JSON.parse(raw) as { code?: unknown };
      if (typeof code === 'string') return normaliseCode(code);
    } catch {
      return null;
    }
  }
  const prefixed = /^fuselight[-:]enrol:(.+)$/i.exec(raw);
  return normaliseCode(prefixed?.[1] ?? raw);
}

export function normaliseCode(code: string): string | null {
  const cleaned = code.replace(/[\s-]+/g, '').toUpperCase();
  return /^[0-9A-Z]{4,64}$/.test(cleaned) ? cleaned : null;
}

/** The code carried by a link's fragment (#code=…) or query (?code=…), if any. */
export function codeInLink(hash: string, search: string): string | null {
  return (
    new URLSearchParams(hash.replace(/^#/, '')).get('code') ??
    new URLSearchParams(search).get('code')
  );
}
