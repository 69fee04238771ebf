/**
 * Regenerates the bundled demo pair in fixtures/demo/: an invented scene — warm air rising from a
 * heated plate across a small lab tunnel, modelled as a planar Gaussian density deficit of 0.12 kg/m³
 * (σ = 5 mm) over a 60 mm span — seen through the setup in fixtures/demo/setup.json.
 * Run: pnpm tsx scripts/make-demo.ts
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { parseSetup, planarGaussianScene, saveImage16, sceneDisplacement, synthPair } from '@rhofield/core';

const W = 640;
const H = 480;
const setup = parseSetup(JSON.parse(readFileSync('fixtures/demo/setup.json', 'utf8')), 'fixtures/demo/setup.json');
const scene = planarGaussianScene(setup, { amplitude: -0.12, sigmaM: 0.005, centerM: [0, -0.004] });
const displacement = sceneDisplacement(scene, setup, W, H);
const { ref, meas } = synthPair({ width: W, height: H, diameterPx: 2.8, dotsPerWindow: 10, seed: 2026, bitDepth: 16, peak: 40000, noiseSigma: 200, displacement });
await saveImage16(ref, 'fixtures/demo/reference.png');
await saveImage16(meas, 'fixtures/demo/measurement.png');
let max = 0;
for (let y = 0; y < H; y += 4) for (let x = 0; x < W; x += 4) max = Math.max(max, Math.hypot(...displacement(x, y)));
writeFileSync(
  'fixtures/demo/README.md',
  `# Demo pair (synthetic)\n\nMade by \`scripts/make-demo.ts\`: warm air above a heated plate in a small lab tunnel, modelled as a\nplanar Gaussian density deficit Δρ = −0.12 kg/m³, σ = 5 mm, span 60 mm, centred 4 mm below the image\ncentre; 16-bit, 2.8 px dots, ~10 dots per 32 px window, noise σ = 0.5% of the dot peak.\nLargest true displacement ${max.toFixed(3)} px. Invented data for the demo only.\n`,
);
console.error(`demo pair written; largest displacement ${max.toFixed(3)} px`);
