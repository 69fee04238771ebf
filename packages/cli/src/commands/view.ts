/**
 * `rhofield view KIND RESULT_DIR`: classic schlieren/shadowgraph pictures computed from a measured
 * result folder (made by `rhofield displacement` or `rhofield density` with npy output).
 * With a density result the views use the deflection angle (rad, from the optical setup); with a
 * displacement-only result they use the displacement (px) — note that the apparent displacement
 * points opposite to the deflection (docs/conventions.md).
 */
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import {
  colourSchlieren,
  contourView,
  decodeNpy,
  inputError,
  invalidParameter,
  knifeEdgeView,
  shadowgraphView,
  RhofieldError,
  VERSION,
  viewFigure,
  type Field,
} from '@rhofield/core';
import { EXIT_CODES_HELP, Log, OutputDir, parseNumOpt, writeOutputFiles, type GlobalOpts } from '../common.js';
import { MANIFEST_NAME } from '../outputs.js';
import { describeCommand } from './index.js';

const KINDS = ['knife-edge', 'colour', 'shadowgraph', 'contour'] as const;
type Kind = (typeof KINDS)[number];

interface ViewOpts extends GlobalOpts {
  angle?: string;
  out?: string;
  force?: boolean;
  levels?: string;
  figureWidth?: string;
  dpi?: string;
}

function readField(dir: string, name: string): Field {
  const f = path.join(dir, name);
  if (!existsSync(f)) throw inputError(`result folder ${dir} is missing ${name}; rerun the command that made it with --format including npy`);
  const a = decodeNpy(readFileSync(f), f);
  if (a.shape.length !== 2) throw inputError(`${f} holds a ${a.shape.length}-dimensional array, expected rows×cols; rerun the command that made ${dir}`);
  const [h, w] = a.shape as [number, number];
  const data = Float32Array.from(a.data as ArrayLike<number>);
  let finite = 0;
  for (let i = 0; i < data.length; i++) if (Number.isFinite(data[i]!)) finite++;
  if (finite === 0) throw inputError(`${f} holds no finite value (all ${data.length} are NaN or infinite): nothing to show; check the measurement that made ${dir} (mask, images)`);
  return { width: w, height: h, data };
}

function readVec(dir: string, name: string): Float64Array {
  const f = path.join(dir, name);
  if (!existsSync(f)) throw inputError(`result folder ${dir} is missing ${name}; rerun the command that made it with --format including npy`);
  return Float64Array.from(decodeNpy(readFileSync(f), f).data as ArrayLike<number>);
}

async function runView(kindRaw: string, dir: string, o: ViewOpts): Promise<void> {
  const log = new Log(o);
  if (!(KINDS as readonly string[]).includes(kindRaw)) throw invalidParameter('KIND', `one of ${KINDS.join(', ')}`, kindRaw);
  const kind = kindRaw as Kind;
  const angle = parseNumOpt('--angle', o.angle ?? '0')!;
  const resultFile = path.join(dir, 'result.json');
  if (!existsSync(resultFile)) throw inputError(`${dir} is not a rhofield result folder (no result.json); pass the --out folder of displacement or density`);
  let result: { tool?: string; version?: string };
  try {
    result = JSON.parse(readFileSync(resultFile, 'utf8'));
  } catch {
    throw inputError(`${resultFile} is not valid JSON; rerun the command that made it`);
  }
  const major = (v: string) => v.split('.')[0];
  if (result.tool !== 'rhofield' || typeof result.version !== 'string' || major(result.version) !== major(VERSION)) {
    throw inputError(`${dir} was made by an incompatible version (${result.version ?? 'unknown'}; this is ${VERSION}); rerun it with this version`);
  }
  const density = existsSync(path.join(dir, 'density_rho.npy'));
  const haveM = existsSync(path.join(dir, 'displacement_x_m.npy'));
  const xs = haveM ? readVec(dir, 'displacement_x_m.npy') : readVec(dir, 'displacement_x_px.npy');
  const ys = haveM ? readVec(dir, 'displacement_y_m.npy') : readVec(dir, 'displacement_y_px.npy');
  const scale = haveM ? 1000 : 1;
  const xMm = Float64Array.from(xs, (v) => v * scale);
  const yMm = Float64Array.from(ys, (v) => v * scale);
  let vx: Field;
  let vy: Field;
  let unit: string;
  if (density) {
    vx = readField(dir, 'density_eps_x.npy');
    const up = readField(dir, 'density_eps_y.npy');
    vy = { ...up, data: Float32Array.from(up.data, (v) => -v) }; // views take the image frame (y down)
    unit = 'rad';
  } else {
    vx = readField(dir, 'displacement_dx.npy');
    vy = readField(dir, 'displacement_dy.npy');
    unit = 'px';
  }
  const hx = Math.abs((xMm[1] ?? xMm[0]! + 1) - xMm[0]!) / (haveM ? 1000 : 1) || 1;
  const hy = Math.abs((yMm[1] ?? yMm[0]! + 1) - yMm[0]!) / (haveM ? 1000 : 1) || 1;
  const what = density ? 'deflection' : 'displacement';
  let view;
  let title: string;
  if (kind === 'knife-edge') {
    view = knifeEdgeView(vx, vy, { angleDeg: angle, unit });
    title = `knife-edge view: ${what} component at ${angle}° (0° = vertical edge)`;
  } else if (kind === 'colour') {
    view = colourSchlieren(vx, vy, { unit });
    title = `colour schlieren: ${what} direction and magnitude`;
  } else if (kind === 'shadowgraph') {
    view = shadowgraphView(vx, vy, { hx, hy, unit: `${unit}/${haveM ? 'm' : 'px'}` });
    title = `shadowgraph view: −∇·(${what})`;
  } else {
    const wantT = o.levels === 'T' || o.levels === 'temperature';
    if (o.levels !== undefined && !wantT && o.levels !== 'rho') throw invalidParameter('--levels', "'rho' or 'T'", o.levels);
    if (wantT && !existsSync(path.join(dir, 'density_temperature.npy')))
      throw inputError(`${dir} holds no temperature (density_temperature.npy); give medium.pressure in the setup and rerun rhofield density`);
    const rhoName = wantT ? 'density_temperature.npy' : 'density_rho.npy';
    if (!density) throw inputError(`${dir} holds no density (density_rho.npy); contour needs a result of rhofield density`);
    const isT = wantT;
    view = contourView(readField(dir, rhoName), { quantity: isT ? 'temperature T' : 'density ρ', unit: isT ? 'K' : 'kg/m^3', count: 10 });
    title = isT ? 'temperature contours' : 'density contours';
  }
  const widthMm = parseNumOpt('--figure-width', o.figureWidth, 20, 1000);
  const dpi = parseNumOpt('--dpi', o.dpi, 72, 1200);
  if (dpi !== undefined && widthMm === undefined) throw new RhofieldError('usage', '--dpi needs --figure-width (the print width in mm); add --figure-width or drop --dpi');
  const fig = viewFigure(view, { xMm, yMm, axisUnit: haveM ? 'mm' : 'px', title, ...(widthMm !== undefined ? { widthMm } : {}), ...(dpi !== undefined ? { dpi } : {}) });
  const base = o.out ?? path.join(dir, `view_${kind}${kind === 'knife-edge' ? `_${angle}deg` : ''}.png`);
  const svgName = base.endsWith('.png') ? base.replace(/\.png$/, '.svg') : null;
  const named = o.out !== undefined;
  const into = path.dirname(base);
  if (!named || existsSync(path.join(into, MANIFEST_NAME))) {
    // into a result folder: the figures join its list of files rhofield wrote (a file rhofield did not
    // write is never replaced, unless the user named it with --out and passed --force)
    const names = svgName ? [path.basename(base), path.basename(svgName)] : [path.basename(base)];
    const folder = await OutputDir.open(into, !!o.force, { command: 'view', mode: 'add', expect: names, label: named ? '--out' : 'result folder', ...(named ? { named: names } : {}) });
    try {
      await folder.writeFile(names[0]!, await fig.png());
      if (svgName) await folder.writeFile(names[1]!, fig.svg);
      await folder.commit();
    } catch (e) {
      await folder.abort();
      throw folder.explain(e);
    }
  } else {
    // a file the user named (and the SVG beside it): replaced only with --force
    await writeOutputFiles([{ path: base, data: await fig.png() } as { path: string; data: string | Uint8Array }].concat(svgName ? [{ path: svgName, data: fig.svg }] : []), !!o.force, '--out');
  }
  log.info(`wrote ${base}`);
  log.json({ kind, file: base, source: what, unit });
}

export function register(program: Command): void {
  program
    .command('view')
    .description(describeCommand('view'))
    .argument('<kind>', `one of ${KINDS.join(', ')}`)
    .argument('<resultDir>', 'output folder of rhofield displacement or density (with npy files)')
    .option('--angle <deg>', 'knife-edge: direction of sensitivity in degrees; 0° = horizontal deflection (a vertical knife edge), 90° = upward', '0')
    .option('--levels <what>', "contour: 'rho' (default) or 'T' (temperature, when present)")
    .option('--out <file.png>', 'output PNG (an SVG is written beside it); default RESULT_DIR/view_<kind>.png')
    .option('--figure-width <mm>', 'print width in mm (with --dpi; default: 800 px wide)')
    .option('--dpi <n>', 'resolution for print, 72–1200 (default 96 with --figure-width)')
    .option('--force', 'replace an existing view (in RESULT_DIR only one rhofield wrote; a file named by --out in any case)')
    .option('--json', 'machine summary on stdout')
    .option('--quiet', 'no messages')
    .option('--verbose', 'more messages')
    .addHelpText('after', EXIT_CODES_HELP)
    .action((kind: string, dir: string, o: ViewOpts) => runView(kind, dir, o));
}
