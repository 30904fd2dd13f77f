/**
 * Wall-clock time of instants in an IANA time zone, fast.
 *
 * luxon's IANAZone gives the zone's UTC offset at an instant. Offsets change rarely, so they are
 * cached per UTC hour; an hour is cached only when the offset is the same at its first and last
 * millisecond, so an hour holding a change is asked about each instant (exact, and rare). Hours from
 * 1899 to 2200 (the timestamps' range) are cached in an Int16Array (5 MB, made on first use; one load
 * a row), others in a Map.
 */
import { IANAZone } from 'luxon';

const HOUR = 3_600_000;
/** The hours of 1899-01-01 to 2201-01-01 UTC. */
const FIRST_HOUR = Date.UTC(1899, 0, 1) / HOUR;
const HOURS = Date.UTC(2201, 0, 1) / HOUR - FIRST_HOUR;
/** Offsets are within ±18 hours (±1,080 minutes), so these never clash with one. */
const UNKNOWN = -32768;
const CHANGES = -32767;

/** IANA names of UTC itself: offset 0 at every instant, known without luxon (whose first look at a zone loads the time zone data). */
export const FIXED_UTC_ZONES: ReadonlySet<string> = new Set(['UTC', 'Etc/UTC']);

export class ZoneClock {
  /** luxon's zone, made on first use (never for UTC). */
  private zoneMade: IANAZone | undefined;
  private readonly cache = new Map<number, number>();
  private readonly fixed: number | undefined;
  /** Offsets (whole minutes) of the hours from FIRST_HOUR on; UNKNOWN not yet asked, CHANGES for an hour holding a change (or an offset in seconds). */
  private table: Int16Array | undefined;

  constructor(private readonly zoneName: string) {
    this.fixed = FIXED_UTC_ZONES.has(zoneName) ? 0 : undefined;
  }

  private get zone(): IANAZone {
    return (this.zoneMade ??= IANAZone.create(this.zoneName));
  }

  /** UTC offset in minutes at an instant (ms since the epoch). */
  offsetMinutes(ms: number): number {
    if (this.fixed !== undefined) return this.fixed;
    const hour = Math.floor(ms / HOUR);
    const i = hour - FIRST_HOUR;
    if (i >= 0 && i < HOURS) {
      const t = (this.table ??= new Int16Array(HOURS).fill(UNKNOWN));
      const v = t[i];
      if (v !== UNKNOWN && v !== CHANGES) return v;
      if (v === CHANGES) return this.zone.offset(ms);
      const a = this.zone.offset(hour * HOUR);
      const b = this.zone.offset(hour * HOUR + HOUR - 1);
      // an offset of whole minutes is kept; a local-mean-time offset in seconds (before ~1940 in some zones) is asked each time
      const keep = a === b && Number.isInteger(a);
      t[i] = keep ? a : CHANGES;
      return keep ? a : this.zone.offset(ms);
    }
    const hit = this.cache.get(hour);
    if (hit !== undefined) return hit;
    const a = this.zone.offset(hour * HOUR);
    const b = this.zone.offset(hour * HOUR + HOUR - 1);
    if (a === b) {
      this.cache.set(hour, a);
      return a;
    }
    return this.zone.offset(ms);
  }

  /** Wall-clock ms: the instant's local date and time in this zone, counted as if it were UTC. */
  wallMs(ms: number): number {
    return ms + this.offsetMinutes(ms) * 60_000;
  }
}
