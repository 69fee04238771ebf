/**
 * `rhofield pattern`: a printable random-dot background (PDF/SVG vector, or PNG at a DPI) with a scale
 * bar and a label for checking the print with a ruler.
 */
import { existsSync } from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import {
  generatePattern,
  invalidParameter,
  loadSetup,
  parseLength,
  patternToPdf,
  patternToPng,
  patternToSvg,
  recommendDotDiameter,
  MAX_PNG_PIXELS,
  RhofieldError,
  setupWarnings,
} from '@rhofield/core';
import { EXIT_CODES_HELP, Log, parseIntOpt, parseNumOpt, requireFile, writeOutputFiles } from '../common.js';
import { withSetupFile } from '../inputChecks.js';
import { describeCommand } from './index.js';

interface PatternOpts {
  width?: string;
  height?: string;
  dot?: string;
  fill?: string;
  seed?: string;
  dpi?: string;
  setup?: string;
  out?: string;
  force?: boolean;
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
}

export function register(program: Command): void {
  program
    .command('pattern')
    .description(describeCommand('pattern'))
    .option('--width <length>', 'page width with unit: mm, cm, m or in (e.g. 297mm); with --setup defaults to the field of view on the background plus margins')
    .option('--height <length>', 'page height with unit (e.g. 210mm)')
    .option('--dot <length>', 'dot diameter with unit (e.g. 0.6mm); with --setup chosen for a 2.5 px dot image')
    .option('--fill <fraction>', 'fraction of the dotted area covered by dots, above 0 and at most 0.5 (default 0.4)')
    .option('--seed <n>', 'random seed, integer (default 1)')
    .option('--dpi <n>', `PNG resolution, 50–2400 (default 300); PNGs above ${MAX_PNG_PIXELS / 1e6} megapixels are refused`)
    .option('--setup <file>', 'setup file (JSON): pick the dot size so the dot image is about 2.5 px (e⁻²) on the sensor, rounded to 0.05 mm')
    .option('--out <file>', 'output file; the extension chooses the format: .pdf, .svg or .png')
    .option('--force', 'overwrite an existing output file')
    .option('--json', 'print a JSON summary on stdout')
    .option('--quiet', 'no messages on stderr')
    .option('--verbose', 'more detail on errors')
    .addHelpText('after', EXIT_CODES_HELP)
    .action(async (o: PatternOpts) => {
      const log = new Log(o);
      if (!o.out) throw invalidParameter('--out', 'an output file ending in .pdf, .svg or .png', o.out);
      const ext = path.extname(o.out).toLowerCase();
      if (!['.pdf', '.svg', '.png'].includes(ext)) throw invalidParameter('--out', 'a file name ending in .pdf, .svg or .png', o.out);
      const fill = parseNumOpt('--fill', o.fill);
      if (fill !== undefined && !(fill > 0 && fill <= 0.5)) {
        throw invalidParameter('--fill', 'a fraction above 0 and at most 0.5', o.fill, 'random non-overlapping dots jam near 0.55, and denser packing turns periodic and confuses correlation');
      }
      const seed = parseIntOpt('--seed', o.seed, 0, 2 ** 32 - 1) ?? 1;
      const dpi = parseNumOpt('--dpi', o.dpi, 50, 2400) ?? 300;
      let width = o.width !== undefined ? parseLength('--width', o.width) : undefined;
      let height = o.height !== undefined ? parseLength('--height', o.height) : undefined;
      let dot = o.dot !== undefined ? parseLength('--dot', o.dot) : undefined;
      let dotNote = '';
      let setupNotes: string[] = [];
      if (o.setup) {
        requireFile('setup file', o.setup);
        const s = loadSetup(o.setup);
        if (s.camera.fNumber === undefined) throw invalidParameter(`${o.setup}: camera.fNumber`, 'the f-number (needed to size the dots)', undefined);
        const fNumber = s.camera.fNumber;
        let adv: ReturnType<typeof recommendDotDiameter>;
        try {
          adv = recommendDotDiameter({
            focalLength: s.camera.focalLength,
            fNumber,
            pixelPitch: s.camera.pixelPitch,
            lensToBackground: s.geometry.lensToBackground,
            wavelength: s.medium.wavelength,
          });
        } catch (e) {
          throw withSetupFile(e, o.setup);
        }
        setupNotes = setupWarnings(s, o.setup);
        if (dot === undefined) {
          dot = adv.dotDiameter;
          dotNote = `dot ${(dot * 1e3).toFixed(2)} mm chosen for a ${adv.dotImagePx.toFixed(2)} px dot image (diffraction ${adv.diffractionPx.toFixed(2)} px)`;
        }
        const sp = s.camera.sensorPx;
        if (sp && (width === undefined || height === undefined)) {
          // Field of view on the background (sensor size · p / M) plus 10 mm (sides) and 20 mm (top + label band).
          const fov = (n: number): number => (n * s.camera.pixelPitch) / adv.magnification;
          width ??= Math.ceil(fov(sp[0]) * 1e3 + 10) / 1e3;
          height ??= Math.ceil(fov(sp[1]) * 1e3 + 20) / 1e3;
        }
      }
      if (width === undefined) throw invalidParameter('--width', 'a page width with unit (e.g. 297mm)', undefined);
      if (height === undefined) throw invalidParameter('--height', 'a page height with unit (e.g. 210mm)', undefined);
      if (dot === undefined) throw invalidParameter('--dot', 'a dot diameter with unit (e.g. 0.6mm), or --setup FILE', undefined);
      if (existsSync(o.out) && !o.force) throw new RhofieldError('usage', `--out ${o.out} already exists; pass --force to overwrite it or choose another name`);
      if (ext === '.png') {
        const px = Math.round((width / 0.0254) * dpi) * Math.round((height / 0.0254) * dpi);
        if (px > MAX_PNG_PIXELS) throw invalidParameter('PNG size', `at most ${MAX_PNG_PIXELS / 1e6} megapixels`, `${(px / 1e6).toFixed(0)} megapixels at ${dpi} dpi`, 'lower --dpi or write PDF/SVG (vector, any size)');
      }
      const pat = generatePattern({ width, height, dotDiameter: dot, seed, ...(fill !== undefined ? { fill } : {}) });
      const bytes = ext === '.svg' ? patternToSvg(pat) : ext === '.pdf' ? patternToPdf(pat) : await patternToPng(pat, dpi);
      await writeOutputFiles([{ path: o.out, data: bytes }], !!o.force, '--out');
      for (const w of setupNotes) log.warn(w);
      if (dotNote) log.info(dotNote);
      log.info(
        `wrote ${o.out}: ${(width * 1e3).toFixed(1)} × ${(height * 1e3).toFixed(1)} mm, ${pat.count} dots of ${(dot * 1e3).toFixed(3)} mm, fill ${pat.achievedFill.toFixed(4)}, seed ${seed}` +
          (ext === '.png' ? ` at ${dpi} dpi` : ''),
      );
      log.json({
        command: 'pattern',
        out: o.out,
        format: ext.slice(1),
        widthM: width,
        heightM: height,
        dotDiameterM: dot,
        fill: pat.fill,
        achievedFill: pat.achievedFill,
        dots: pat.count,
        seed,
        dotAreaM: pat.area,
        ...(ext === '.png' ? { dpi } : {}),
      });
    });
}
