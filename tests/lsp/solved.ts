// A document state with a real (coarse) solve attached, for the features that show solved figures.
import { electrodeLocations, documentState, geometrySignature, type DocumentState } from '../../server/src/lsp/core';
import { solveScene } from '../../server/src/engine/index';

export function solvedState(text: string): DocumentState {
  const state = documentState(text);
  const result = solveScene(state.analysis.scene, { level: 'coarse' });
  if (!result) throw new Error('solve was cancelled');
  state.solved = { version: state.document.version, level: 'coarse', result, electrodes: electrodeLocations(state.analysis), solveMs: 0, geometry: geometrySignature(state.analysis.scene) };
  return state;
}
