// J-distance column headers: which distance from the quenched end a column holds, and in which
// system: millimetres (ISO 642) or sixteenths of an inch (ASTM A255 / SAE J406).
//
// Our own layout writes the unit in the header:  "J 1.5 mm", "J1.5mm", "J 4/16", "J4/16 in", 'J 4/16"'.
// A bare "J4" is refused: it could mean 4 mm or 4/16 in (6.35 mm), so the unit must be said.
// A mill layout declares the unit once and names its columns by an explicit map or a pattern.
import type { DistanceSystem } from './certificateSchema.ts';

export interface DistancePosition {
  system: DistanceSystem;
  /** Distance in the system's own unit (mm, or sixteenths of an inch). */
  at: number;
}

export type HeaderReading =
  | { kind: 'distance'; position: DistancePosition }
  | { kind: 'refused'; reason: string }
  | { kind: 'not-distance' };

const NUMBER = '(\\d+(?:[.,]\\d+)?)';
const MM_HEADER = new RegExp(`^J\\s*${NUMBER}\\s*mm$`, 'i');
const SIXTEENTHS_HEADER = new RegExp(`^J\\s*${NUMBER}\\s*/\\s*16\\s*(?:in|inch|"|″)?$`, 'i');
const BARE_J = new RegExp(`^J\\s*${NUMBER}\\s*(.*)$`, 'i');

function toNumber(text: string): number {
  return Number(text.replace(',', '.'));
}

/** The canonical header our own layout writes for a position ("J 1.5 mm", "J 4/16"). */
export function distanceHeader(position: DistancePosition): string {
  return position.system === 'mm' ? `J ${position.at} mm` : `J ${position.at}/16`;
}

/** Reads a header of our own layout. */
export function readDistanceHeader(header: string): HeaderReading {
  const h = header.trim();
  const mm = MM_HEADER.exec(h);
  if (mm) return checked({ system: 'mm', at: toNumber(mm[1]) }, h);
  const six = SIXTEENTHS_HEADER.exec(h);
  if (six) return checked({ system: 'sixteenths', at: toNumber(six[1]) }, h);
  const bare = BARE_J.exec(h);
  if (bare) {
    const n = bare[1];
    return {
      kind: 'refused',
      reason: `"${h}" looks like a J-distance but its unit is not clear: write "J ${n} mm" (ISO 642) or "J ${n}/16" (sixteenths of an inch, ASTM A255)`,
    };
  }
  return { kind: 'not-distance' };
}

function checked(position: DistancePosition, header: string): HeaderReading {
  if (!(position.at > 0)) return { kind: 'refused', reason: `"${header}" names distance 0; distances start above the quenched end` };
  return { kind: 'distance', position };
}

/** A mill layout's distance columns: its unit and either an explicit header map or a pattern. */
export type DistanceColumnSpec =
  | { unit: DistanceSystem; columns: Record<string, number> }
  | { unit: DistanceSystem; pattern: string };

export function normaliseHeader(text: string): string {
  return text.trim().replace(/\s+/g, ' ').toLowerCase();
}

/** Compiles a layout pattern (case-insensitive); it must hold exactly one capture group. */
export function compileDistancePattern(pattern: string): RegExp {
  const re = new RegExp(pattern, 'i');
  const groups = (new RegExp(`${pattern}|`, 'i').exec('') as RegExpExecArray).length - 1;
  if (groups !== 1) throw new Error(`has ${groups} capture groups; it needs exactly one, around the distance number`);
  return re;
}

/** Reads a header against a mill layout's distance specs; undefined when the header is not a distance column. */
export function readLayoutDistanceHeader(header: string, specs: readonly DistanceColumnSpec[], compiled: ReadonlyMap<string, RegExp>): HeaderReading {
  const h = header.trim();
  const norm = normaliseHeader(h);
  for (const spec of specs) {
    if ('columns' in spec) {
      for (const [text, at] of Object.entries(spec.columns)) {
        if (normaliseHeader(text) === norm) return { kind: 'distance', position: { system: spec.unit, at } };
      }
    } else {
      const re = compiled.get(spec.pattern) ?? compileDistancePattern(spec.pattern);
      const m = re.exec(h);
      if (m) {
        const captured = m[1]?.trim() ?? '';
        if (!/^\d+(?:[.,]\d+)?$/.test(captured)) {
          return { kind: 'refused', reason: `"${h}" matches the layout's distance pattern, but "${captured}" is not a distance number` };
        }
        return checked({ system: spec.unit, at: toNumber(captured) }, h);
      }
    }
  }
  return { kind: 'not-distance' };
}
