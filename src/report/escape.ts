/** HTML escaping for every string that comes from data (event names, attribute values, labels). */
import { escapeControls } from '../errors.js';

const MAP: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;', '`': '&#96;' };

/** Escape text for HTML element content and quoted attribute values. Example: `<b a="1">` → `&lt;b a=&quot;1&quot;&gt;`. */
export function escapeHtml(value: unknown): string {
  return String(value ?? '').replace(/[&<>"'`]/g, (c) => MAP[c]);
}

/**
 * Shorten a data string for display (very long names would break layouts), show its control codes and
 * direction overrides escaped (`\u202e`: they could reorder or hide text), then escape it for HTML.
 */
export function escapeShort(value: unknown, max = 60): string {
  const s = String(value ?? '');
  return escapeHtml(escapeControls(s.length > max ? `${s.slice(0, max - 1)}…` : s));
}
