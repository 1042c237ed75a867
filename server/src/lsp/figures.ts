// Solved figures and quantities as people read them, shared by hover and inlay hints.
import type { Space } from '../../../grammar/scene';
import { sameDim, type Dim } from '../../../grammar/units';
import type { ElectrodeResult } from '../engine/result';
import { formatPoint, formatQuantity, formatRelative, type QuantityKind } from '../format/quantity';

const KINDS: { dim: Dim; kind: QuantityKind }[] = [
  { dim: [1, 0, 0], kind: 'length' },
  { dim: [0, 1, 0], kind: 'potential' },
  { dim: [0, 0, 1], kind: 'charge' },
  { dim: [-1, 1, 0], kind: 'field' },
  { dim: [-1, 0, 1], kind: 'lineCharge' },
  { dim: [-2, 0, 1], kind: 'surfaceCharge' },
  { dim: [0, -1, 1], kind: 'capacitance' },
  { dim: [-1, -1, 1], kind: 'capacitancePerLength' },
  { dim: [0, 1, 1], kind: 'energy' },
  { dim: [-1, 1, 1], kind: 'force' },
];

/** The quantity kind of a dimension, for choosing a display unit; null when there is none. */
export function quantityKindOf(dim: Dim): QuantityKind | null {
  return KINDS.find((k) => sameDim(k.dim, dim))?.kind ?? null;
}

/** Charge and capacitance are per metre in planar. */
export function chargeKind(space: Space): QuantityKind {
  return space === 'planar' ? 'lineCharge' : 'charge';
}
export function capacitanceKind(space: Space): QuantityKind {
  return space === 'planar' ? 'capacitancePerLength' : 'capacitance';
}

/** A short line for an inlay hint: "φ 4 kV · Q 12.3 pC · Emax 1.2 kV/mm". */
export function shortFigures(e: ElectrodeResult, space: Space): string {
  return [
    `φ ${formatQuantity(e.potential, 'potential', { digits: 3 })}`,
    `Q ${formatQuantity(e.charge, chargeKind(space), { digits: 3 })}`,
    `Emax ${formatQuantity(e.maxField, 'field', { digits: 3 })}`,
  ].join(' · ');
}

/** Markdown lines with an electrode's solved figures, for hover. */
export function electrodeFigures(e: ElectrodeResult, space: Space): string[] {
  const edge = e.maxFieldOnEdge ? ' — on a sharp edge, where the true field is singular and grows with refinement' : '';
  return [
    `| | |`,
    `|---|---|`,
    `| potential | ${formatQuantity(e.potential, 'potential')} |`,
    `| charge | ${formatQuantity(e.charge, chargeKind(space))} |`,
    `| capacitance (self, Cₖₖ) | ${formatQuantity(e.capacitance, capacitanceKind(space))} (${formatRelative(e.capacitanceConvergence.relativeError)}) |`,
    `| peak field | ${formatQuantity(e.maxField, 'field')} (${formatRelative(e.maxFieldConvergence.relativeError)}) |`,
    `| peak at | ${formatPoint(e.maxFieldAt)}${edge} |`,
  ];
}

/** The caution every field figure carries (architecture.md, "Security and safety"). */
export const CAUTION =
  'High voltage kills. These figures are a design aid, not a substitute for the applicable standards, local codes, testing and licensed practice.';
