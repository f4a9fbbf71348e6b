/** Today's date (YYYY-MM-DD) in an IANA time zone, for "not in the future" checks at a site. */
export function todayIn(timeZone: string, now = new Date()): string {
  return new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(now);
}

