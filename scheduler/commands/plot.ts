/**
 * `darksieve plot DB --x NAME --y NAME [--color NAME] [--survivors-only] [--set NAME] [--scan ID]
 *  [--fix NAME=VALUE ...] --out FILE.svg|.png`: a picture of one plane of a scan (scheduler/plot/plot-plane.ts).
 */
import type { Command } from 'commander';
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { writePlot, SCALE_CHOICES } from '../plot/plot-plane.js';
import type { ScaleChoice } from '../plot/axis-scale.js';

interface PlotFlags {
  x: string;
  y: string;
  color?: string;
  survivorsOnly?: boolean;
  set?: string;
  scan?: string;
  out: string;
  xScale?: string;
  yScale?: string;
  colorScale?: string;
  width?: string;
  height?: string;
  json?: boolean;
  fix: string[];
}

/** A whole number from a flag, or an issue naming the flag. */
function integerFlag(value: string | undefined, path: string, issues: Issue[], min = 0): number | undefined {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (!Number.isInteger(n) || n < min) {
    issues.push({ code: 'type', path, message: `${path} must be a whole number >= ${min}`, seen: value, allowed: `integer >= ${min}` });
    return undefined;
  }
  return n;
}

export function registerPlot(program: Command): void {
  const scales = SCALE_CHOICES.join('|');
  program
    .command('plot')
    .description(
      'Draw one plane of a scan as SVG or PNG: a scatter plot (up to 20,000 points), a 2-D histogram\n' +
        '(more points: per-bin aggregates computed in SQL) or, for a grid scan\'s own axes, a heat map\n' +
        'with the relic-target line Omega h^2 = 0.120. Survivors and excluded points are told apart;\n' +
        'limit curves of the spec drawn in the same plane are shown with their labels.',
    )
    .argument('<db>', 'ledger file')
    .requiredOption('--x <name>', 'parameter or observable on the horizontal axis (a points column)')
    .requiredOption('--y <name>', 'parameter or observable on the vertical axis')
    .option('--color <name>', 'colour points or cells by this parameter or observable (viridis)')
    .option('--survivors-only', 'draw only points that survive every constraint of the set')
    .option('--set <name>', 'constraint set whose verdicts are shown (default: the most recently judged)')
    .option('--scan <id>', 'scan id or name in the ledger (default: the only scan)')
    .requiredOption('--out <file>', 'output file, .svg or .png (PNG at 2 pixels per SVG unit)')
    .option('--x-scale <kind>', `x axis scale, ${scales} (auto: log when positive over >= 1.5 decades)`, 'auto')
    .option('--y-scale <kind>', `y axis scale, ${scales}`, 'auto')
    .option('--color-scale <kind>', `colour scale, ${scales}`, 'auto')
    .option('--width <px>', 'picture width in SVG units (default 720)')
    .option('--height <px>', 'picture height in SVG units (default 540)')
    .option('--fix <name=value>', 'hold a model parameter at the stored value nearest to value (repeatable), e.g. --fix m_med=1000 --fix mediator=vector: one slice of the scan', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .option('--json', 'print what was written as one JSON object')
    .action((db: string, flags: PlotFlags) => {
      const issues: Issue[] = [];
            const width = integerFlag(flags.width, '--width', issues);
      const height = integerFlag(flags.height, '--height', issues);
      if (issues.length) throw new InvalidInputError(issues);
      const result = writePlot({
        db, out: flags.out, x: flags.x, y: flags.y, color: flags.color, survivorsOnly: flags.survivorsOnly ?? false,
        set: flags.set, scan: flags.scan, width, height, fix: flags.fix,
        xScale: flags.xScale as ScaleChoice, yScale: flags.yScale as ScaleChoice, colorScale: flags.colorScale as ScaleChoice,
      });
      if (flags.json) process.stdout.write(`${JSON.stringify(result)}\n`);
      else process.stdout.write(`wrote ${result.file} (${result.mode}, ${result.drawnPoints} points drawn, ${result.omittedPoints} omitted)\n`);
    });
}
