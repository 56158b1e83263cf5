/**
 * Element look-ups over the generated table (src/elements/table.ts; sources named there).
 */
import { InputError } from '../core/errors';
import { ELEMENT_ROWS } from './table';

/** Absorption edges shellrank knows. */
export type EdgeName = 'K' | 'L1' | 'L2' | 'L3';
export const EDGE_NAMES: readonly EdgeName[] = ['K', 'L1', 'L2', 'L3'];

export interface EdgeData {
  /** Edge (binding) energy in eV. */
  energy: number;
  /** Core-level width (FWHM) in eV, or null when the source has none. */
  width: number | null;
}

export interface Element {
  z: number;
  symbol: string;
  /** Standard atomic weight in amu. */
  weight: number;
  edges: Partial<Record<EdgeName, EdgeData>>;
}

const ELEMENTS: readonly Element[] = ELEMENT_ROWS.map((row) => {
  const edges: Partial<Record<EdgeName, EdgeData>> = {};
  EDGE_NAMES.forEach((name, i) => {
    const energy = row[3 + 2 * i] as number | null;
    const width = row[4 + 2 * i] as number | null;
    if (energy !== null) edges[name] = { energy, width };
  });
  return Object.freeze({ z: row[0], symbol: row[1], weight: row[2], edges: Object.freeze(edges) });
});

const BY_SYMBOL = new Map(ELEMENTS.map((e) => [e.symbol.toLowerCase(), e]));

/** Highest atomic number in the table. */
export const MAX_Z = ELEMENTS.length;

/** Canonical-case symbol ("cu" -> "Cu"), or null when the text is not an element symbol. */
export function canonicalSymbol(text: string): string | null {
  const e = BY_SYMBOL.get(text.trim().toLowerCase());
  return e ? e.symbol : null;
}

/** True when `text` (any case) is an element symbol with Z <= 96. */
export function isElementSymbol(text: string): boolean {
  return canonicalSymbol(text) !== null;
}

/** The element with this symbol (any case); InputError when unknown. */
export function elementBySymbol(symbol: string): Element {
  const e = BY_SYMBOL.get(symbol.trim().toLowerCase());
  if (!e) throw new InputError(`'${symbol}' is not an element symbol (Z 1-96)`);
  return e;
}

/** The element with this atomic number; RangeError outside 1..96. */
export function elementByZ(z: number): Element {
  const e = ELEMENTS[z - 1];
  if (!e || !Number.isInteger(z)) throw new RangeError(`atomic number ${z} is outside 1..${MAX_Z}`);
  return e;
}

/** Edge data of an element, InputError when the element has no such edge in the table. */
export function edgeOf(symbol: string, edge: EdgeName): EdgeData {
  const e = elementBySymbol(symbol);
  const data = e.edges[edge];
  if (!data) throw new InputError(`${e.symbol} has no ${edge} edge in the element table`);
  return data;
}

/** Parse an edge name (case-insensitive); InputError otherwise. */
export function parseEdge(text: string): EdgeName {
  const upper = text.trim().toUpperCase();
  if ((EDGE_NAMES as readonly string[]).includes(upper)) return upper as EdgeName;
  throw new InputError(`unknown edge '${text}' (expected one of ${EDGE_NAMES.join(', ')})`);
}

/**
 * Orbital angular momentum of the photoelectron's dominant final state for an edge:
 * dipole selection l_core +- 1, with the l_core + 1 channel dominant (common practice, no source):
 * K and L1 (s core) -> p (l = 1); L2 and L3 (p core) -> d (l = 2), with a weaker s (l = 0) channel.
 */
export function finalStateL(edge: EdgeName): number {
  return edge === 'K' || edge === 'L1' ? 1 : 2;
}
