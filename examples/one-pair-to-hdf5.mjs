// One image pair → density → HDF5, as a lab script would do it with the rhofield library.
//
//   node examples/one-pair-to-hdf5.mjs [REF] [MEAS] [SETUP] [OUT.h5]
//
// Defaults process the bundled demo pair (a synthetic heated-plate plume) into out/example/demo.h5.
// Plain Node runs it against the built package (`pnpm build` in a checkout, or the installed tarball).
// Open the result in Python with h5py (`h5py.File('out/example/demo.h5')['rho']`) or in MATLAB with h5read.
import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import {
  densityFieldSet,
  loadImage,
  loadSetup,
  measureDisplacement,
  reconstructDensity,
  writeHdf5,
  closeWorkers,
} from '@rhofield/core';

const [refPath = 'fixtures/demo/reference.png', measPath = 'fixtures/demo/measurement.png', setupPath = 'fixtures/demo/setup.json', outPath = 'out/example/demo.h5'] =
  process.argv.slice(2);

const setup = loadSetup(setupPath); // validated: unknown keys and nonsense geometry are errors
const ref = await loadImage(refPath); // 8/16-bit grey PNG/TIFF/JPEG → float field
const meas = await loadImage(measPath);

// Displacement in pixels (measured minus reference, +x right, +y down): 32 px final windows, 50 % overlap,
// default multi-pass schedule with window deformation and the normalized median test.
const disp = await measureDisplacement(ref.field, meas.field, { windowPx: 32 });
console.log(`vectors: ${disp.grid.cols}×${disp.grid.rows}, valid ${disp.counts.valid}, replaced ${disp.counts.replaced}`);

// Deflection → density gradient (Gladstone–Dale) → density (Poisson or Abel, from the setup's flow type).
const density = reconstructDensity(disp, setup);
console.log(`density: ${density.summary.min.toFixed(4)} … ${density.summary.max.toFixed(4)} kg/m³ (${density.summary.method})`);

// Every field of the density result with coordinates in metres and units as attributes.
const set = densityFieldSet(density, { xPx: disp.grid.xPx, yPx: disp.grid.yPx }, { settings: { windowPx: 32, source: [refPath, measPath] } });
await mkdir(path.dirname(outPath), { recursive: true });
await writeHdf5(outPath, set);
console.log(`wrote ${outPath}`);
await closeWorkers();
