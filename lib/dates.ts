/** Today's date (YYYY-MM-DD) in an IANA time zone, for "not in the future" checks at a site. */
export function todayIn(timeZone: string, now = new Date()): string {
  return new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(now);
}

/** A UTC instant shown in a site's time zone, e.g. "2026-12-02 09:14 (Europe/London)". */
export function formatInZone(iso: string, timeZone: string): string {
  const d = new Date(iso);
  const parts = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hour12: false }).format(d);
  return parts.replace(',', '');
}
