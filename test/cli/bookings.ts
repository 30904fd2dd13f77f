/** Test fixture shared by the option tests: a small invented booking log (demo scenario). */
const DAY = 86_400_000;
const MONDAY = Date.UTC(2026, 2, 2);
/** 60 members over 6 weeks, most weeks active; the data stop on Wednesday of week 6 (incomplete). */
export function bookings(): string {
  const rows = ['user_id,timestamp,event,plan'];
  for (let m = 0; m < 60; m++) {
    for (let w = 0; w < 6; w++) if ((m + w) % 3 !== 0) rows.push(`m${m},${new Date(MONDAY + w * 7 * DAY + (m % 5) * DAY + 3_600_000).toISOString()},booking_made,${m % 2 ? 'studio' : 'hobby'}`);
    rows.push(`m${m},${new Date(MONDAY + 6 * 7 * DAY + Math.min(m % 7, 2) * DAY + 3_600_000).toISOString()},booking_made,hobby`);
  }
  return rows.join('\n');
}
