// Command-line arguments into a plain command; every mistake becomes a `usage` command with a message.

export type Command =
  | { kind: 'solve'; file: string; json: boolean; grids: boolean; svg: string | null; html: string | null }
  | { kind: 'check'; files: string[] }
  | { kind: 'lsp' }
  | { kind: 'help' }
  | { kind: 'version' }
  | { kind: 'usage'; message: string };

export const USAGE = `Usage:
  voltscape solve FILE [--json [--grids]] [--svg OUT] [--html OUT]
                        solve a scene; print a report (or JSON), write pictures
  voltscape check FILE...
                        print every diagnostic as file:line:col severity code message;
                        solves scenes that set a \`limit\` to test it
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
      default:
        return { kind: 'usage', message: `unknown option ${flag} for solve` };
    }
  }
  if (files.length === 0) return { kind: 'usage', message: 'solve needs a scene file' };
  if (files.length > 1) return { kind: 'usage', message: `solve takes one scene file, got ${files.length}` };
  if (grids && !json) return { kind: 'usage', message: '--grids only goes with --json' };
  return { kind: 'solve', file: files[0], json, grids, svg, html };
}

function parseCheck(args: readonly string[]): Command {
  const files: string[] = [];
  let optionsDone = false;
  for (const a of args) {
    if (!optionsDone && a === '--') optionsDone = true;
    else if (!optionsDone && a.startsWith('-') && a !== '-') return { kind: 'usage', message: `unknown option ${a} for check` };
    else files.push(a);
  }
  if (files.length === 0) return { kind: 'usage', message: 'check needs at least one scene file' };
  return { kind: 'check', files };
}

function parseLsp(args: readonly string[]): Command {
  // The language server reads its transport from the process arguments; stdio is the one the CLI offers.
  for (const a of args) if (a !== '--stdio') return { kind: 'usage', message: `unknown option ${a} for lsp (use --stdio)` };
  if (!args.includes('--stdio')) return { kind: 'usage', message: 'lsp needs --stdio' };
  return { kind: 'lsp' };
}
