/**
 * Wall-clock time of instants in an IANA time zone, fast.
 *
 * luxon's IANAZone gives the zone's UTC offset at an instant. Offsets change rarely, so they are
 * cached per UTC hour; an hour is cached only when the offset is the same at its first and last
 * millisecond, so an hour holding a change is asked about each instant (exact, and rare).
 */
import { IANAZone } from 'luxon';

const HOUR = 3_600_000;

export class ZoneClock {
  private readonly zone: IANAZone;
  private readonly cache = new Map<number, number>();
  private readonly fixed: number | undefined;

  constructor(zoneName: string) {
    this.zone = IANAZone.create(zoneName);
    this.fixed = zoneName === 'UTC' || zoneName === 'Etc/UTC' ? 0 : undefined;
  }

  /** UTC offset in minutes at an instant (ms since the epoch). */
  offsetMinutes(ms: number): number {
    if (this.fixed !== undefined) return this.fixed;
    const hour = Math.floor(ms / HOUR);
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
