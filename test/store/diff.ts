/** The first path where two JSON values differ (a test helper for readable failures). */
export function firstDiff(a: unknown, b: unknown, path = '$'): string | undefined {
  if (JSON.stringify(a) === JSON.stringify(b)) return undefined;
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null) return `${path}: ${JSON.stringify(a)?.slice(0, 200)} ≠ ${JSON.stringify(b)?.slice(0, 200)}`;
  const ka = Object.keys(a as object), kb = Object.keys(b as object);
  if (JSON.stringify(ka) !== JSON.stringify(kb)) return `${path}: keys ${JSON.stringify(ka).slice(0, 200)} ≠ ${JSON.stringify(kb).slice(0, 200)}`;
  for (const k of ka) {
    const d = firstDiff((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`);
    if (d) return d;
  }
  return `${path}: differ`;
}
