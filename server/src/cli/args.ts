// Command-line arguments into a plain command; every mistake becomes a `usage` command with a message.
import { CHECK_FORMATS, type CheckFormat } from './check-formats';

export type Command =
  | { kind: 'solve'; file: string; json: boolean; grids: boolean; svg: string | null; html: string | null; refine?: number }
  | { kind: 'check'; files: string[]; format: CheckFormat }
  | { kind: 'sweep'; file: string; csv: boolean; out: string | null; name: string | null }
  | { kind: 'lsp' }
  | { kind: 'help' }
  | { kind: 'version' }
  | { kind: 'usage'; message: string };

export const USAGE = `Usage:
  voltscape solve FILE [--json [--grids]] [--svg OUT] [--html OUT] [--refine TOL]
                        solve a scene; print a report (or JSON), write pictures;
                        --refine: 3d scenes, refine the mesh until capacitances and peak
                        fields change by less than TOL between rounds (e.g. 1e-3)
  voltscape check [--format text|json|sarif] FILE...
                        print every diagnostic as file:line:col severity code message
                        (or one JSON or SARIF 2.1.0 log); solves scenes that set a \`limit\` to test it
  voltscape sweep FILE [--csv] [--out OUT] [--let NAME]
                        run the scene's \`sweep\`: solve at each value, tabulate each electrode's
                        peak field, self capacitance and margin
  voltscape lsp --stdio start the language server on standard input and output
  voltscape --help      this text
  voltscape --version   the version

Exit codes: 0 clean, 1 errors or a broken limit, 2 could not read or solve, or a usage mistake.
Documentation: docs/cli.md. High voltage kills: the figures are a design aid, not a substitute for
applicable standards, local codes, testing and licensed practice.`;

export function parseArgs(argv: readonly string[]): Command {
  if (argv.length === 0) return { kind: 'usage', message: 'no command given' };
  const [first, ...rest] = argv;
  if (first === '--help' || first === '-h' || first === 'help') return { kind: 'help' };
  if (first === '--version' || first === '-v' || first === 'version') return { kind: 'version' };
  if (rest.includes('--help') || rest.includes('-h')) return { kind: 'help' };
  switch (first) {
    case 'solve':
      return parseSolve(rest);
    case 'check':
      return parseCheck(rest);
    case 'sweep':
      return parseSweep(rest);
    case 'lsp':
      return parseLsp(rest);
    default:
      return { kind: 'usage', message: first.startsWith('-') ? `unknown option ${first}` : `unknown command "${first}"` };
  }
}

function parseSolve(args: readonly string[]): Command {
  const files: string[] = [];
  let json = false;
  let grids = false;
  let svg: string | null = null;
  let html: string | null = null;
  let refine: number | null = null;
  let optionsDone = false;
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (optionsDone || !a.startsWith('-') || a === '-') {
      files.push(a);
      continue;
    }
    const [flag, inline] = a.includes('=') ? [a.slice(0, a.indexOf('=')), a.slice(a.indexOf('=') + 1)] : [a, null];
    const value = (): string | null => {
      if (inline !== null) return inline;
      const next = args[i + 1];
      if (next === undefined || (next.startsWith('-') && next !== '-')) return null;
      i++;
      return next;
    };
    switch (flag) {
      case '--':
        optionsDone = true;
        break;
      case '--json':
        json = true;
        break;
      case '--grids':
        grids = true;
        break;
      case '--svg':
      case '--html': {
        const out = value();
        if (out === null || out === '') return { kind: 'usage', message: `${flag} needs an output file` };
        if (flag === '--svg') svg = out;
        else html = out;
        break;
      }
      case '--refine': {
        const text = value();
        const tol = text === null ? NaN : Number(text);
        if (text === null || text.trim() === '' || !(tol > 0 && tol < 1)) return { kind: 'usage', message: '--refine needs a tolerance between 0 and 1, e.g. 1e-3' };
        refine = tol;
        break;
      }
      default:
        return { kind: 'usage', message: `unknown option ${flag} for solve` };
    }
  }
  if (files.length === 0) return { kind: 'usage', message: 'solve needs a scene file' };
  if (files.length > 1) return { kind: 'usage', message: `solve takes one scene file, got ${files.length}` };
  if (grids && !json) return { kind: 'usage', message: '--grids only goes with --json' };
  return { kind: 'solve', file: files[0], json, grids, svg, html, ...(refine !== null ? { refine } : {}) };
}

function parseCheck(args: readonly string[]): Command {
  const files: string[] = [];
  let format: CheckFormat = 'text';
  let optionsDone = false;
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (!optionsDone && a === '--') optionsDone = true;
    else if (!optionsDone && (a === '--format' || a.startsWith('--format='))) {
      const value = a === '--format' ? args[++i] : a.slice('--format='.length);
      if (!CHECK_FORMATS.includes(value as CheckFormat)) {
        return { kind: 'usage', message: value === undefined ? '--format needs text, json or sarif' : `unknown format "${value}" (use text, json or sarif)` };
      }
      format = value as CheckFormat;
    } else if (!optionsDone && a.startsWith('-') && a !== '-') return { kind: 'usage', message: `unknown option ${a} for check` };
    else files.push(a);
  }
  if (files.length === 0) return { kind: 'usage', message: 'check needs at least one scene file' };
  return { kind: 'check', files, format };
}

function parseSweep(args: readonly string[]): Command {
  const files: string[] = [];
  let csv = false;
  let out: string | null = null;
  let name: string | null = null;
  let optionsDone = false;
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (optionsDone || !a.startsWith('-') || a === '-') files.push(a);
    else if (a === '--') optionsDone = true;
    else if (a === '--csv') csv = true;
    else if (a === '--out' || a.startsWith('--out=') || a === '--let' || a.startsWith('--let=')) {
      const flag = a.startsWith('--out') ? '--out' : '--let';
      const value = a.includes('=') ? a.slice(a.indexOf('=') + 1) : args[++i];
      if (value === undefined || value === '' || value.startsWith('-')) return { kind: 'usage', message: `${flag} needs ${flag === '--out' ? 'an output file' : 'the name of a let'}` };
      if (flag === '--out') out = value;
      else name = value;
    } else return { kind: 'usage', message: `unknown option ${a} for sweep` };
  }
  if (files.length === 0) return { kind: 'usage', message: 'sweep needs a scene file' };
  if (files.length > 1) return { kind: 'usage', message: `sweep takes one scene file, got ${files.length}` };
  return { kind: 'sweep', file: files[0], csv, out, name };
}

function parseLsp(args: readonly string[]): Command {
  // The language server reads its transport from the process arguments; stdio is the one the CLI offers.
  for (const a of args) if (a !== '--stdio') return { kind: 'usage', message: `unknown option ${a} for lsp (use --stdio)` };
  if (!args.includes('--stdio')) return { kind: 'usage', message: 'lsp needs --stdio' };
  return { kind: 'lsp' };
}
