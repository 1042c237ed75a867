// The symbol table: every named thing of a scene (lets, electrodes, charges, probes) with where it
// is defined and where it is used, for go-to-definition, references, rename and hover.
import { containsPosition } from './ast';
import type { Position, Range } from './scene';
import type { Dim } from './units';

export type SymbolKind = 'let' | 'electrode' | 'charge' | 'probe';

export interface SymbolEntry {
  name: string;
  kind: SymbolKind;
  /** The name where it is defined. */
  nameRange: Range;
  /** The whole defining statement. */
  statementRange: Range;
  /** For a let: its SI value (a number, or the components of a tuple) and dimension; null when it could not be evaluated. */
  value: { si: number | number[]; dim: Dim } | null;
  /** Every use of the name (not the definition). */
  references: Range[];
}

export interface SymbolTable {
  /** In order of definition; a name defined twice keeps its first definition. */
  entries: SymbolEntry[];
}

export function findSymbol(table: SymbolTable, name: string): SymbolEntry | undefined {
  return table.entries.find((e) => e.name === name);
}

/** The symbol whose definition or one of whose references lies under the position. */
export function symbolAt(table: SymbolTable, position: Position): SymbolEntry | undefined {
  return table.entries.find((e) => containsPosition(e.nameRange, position) || e.references.some((r) => containsPosition(r, position)));
}
