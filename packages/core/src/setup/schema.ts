/**
 * The setup file schema: one JSON document read by every command. SI units throughout
 * (metres, kg/m³, Pa, K; wavelength in metres). Objects are strict: unknown keys are errors.
 *
 * Each schema carries its "expected …" phrase as the zod error message; {@link parseSetup} turns the
 * first issue into one line "expected X for <key path> but received Z".
 */
import { z } from 'zod';
import { KNOWN_GASES } from '../optics/gases.js';

const positive = (what: string) => z.number({ error: what }).positive({ error: what }).finite({ error: what });
const length = (what = 'a positive length in metres') => positive(what);
const pxPair = (what: string) => z.tuple([z.number({ error: what }).finite({ error: what }), z.number({ error: what }).finite({ error: what })], { error: what });

const gasName = z
  .string({ error: `a gas name, one of ${KNOWN_GASES.join(', ')}` })
  .refine((s) => KNOWN_GASES.includes(s), { error: `a known gas, one of ${KNOWN_GASES.join(', ')} (names are case-sensitive)` });

const SENSOR = 'two positive integers [width, height] in pixels';

export const cameraSchema = z.strictObject(
  {
    focalLength: length('a positive focal length in metres (e.g. 0.105)'),
    fNumber: positive('a positive f-number (e.g. 11)').optional(),
    pixelPitch: length('a positive pixel pitch in metres (e.g. 6.5e-6)'),
    sensorPx: z
      .tuple([z.number().int({ error: SENSOR }).positive({ error: SENSOR }), z.number().int({ error: SENSOR }).positive({ error: SENSOR })], { error: SENSOR })
      .optional(),
  },
  { error: 'an object {focalLength, pixelPitch, fNumber?, sensorPx?}' },
);

export const geometrySchema = z.strictObject(
  {
    lensToBackground: length('a positive lens-to-background distance in metres'),
    flowToBackground: length('a positive flow-to-background distance in metres'),
    originPx: pxPair('two finite numbers [x, y] in image pixels').optional(),
  },
  { error: 'an object {lensToBackground, flowToBackground, originPx?}' },
);

export const mediumSchema = z.strictObject(
  {
    gas: gasName.optional(),
    gladstoneDale: positive('a positive Gladstone–Dale constant in m³/kg (air ≈ 2.27e-4)').optional(),
    mixture: z
      .record(gasName, z.number({ error: 'a mass fraction in [0, 1]' }).min(0, { error: 'a mass fraction in [0, 1]' }).max(1, { error: 'a mass fraction in [0, 1]' }), {
        error: 'an object {gas name: mass fraction}',
      })
      .optional(),
    wavelength: z
      .number({ error: 'a wavelength in metres between 2e-7 and 2e-6 (200 nm – 2 µm)' })
      .min(2e-7, { error: 'a wavelength in metres between 2e-7 and 2e-6 (200 nm – 2 µm)' })
      .max(2e-6, { error: 'a wavelength in metres between 2e-7 and 2e-6 (200 nm – 2 µm)' }),
    referenceDensity: positive('a positive density in kg/m³ (room air ≈ 1.2)'),
    pressure: positive('a positive absolute pressure in Pa (e.g. 101325)').optional(),
  },
  { error: 'an object {gas | gladstoneDale | mixture, wavelength, referenceDensity, pressure?}' },
);

const rectPx = z.strictObject(
  {
    rectPx: z.tuple([z.number(), z.number(), z.number(), z.number()], { error: 'four numbers [x0, y0, x1, y1] in image pixels' }),
  },
  { error: '"top", "bottom", "left", "right" or {"rectPx": [x0, y0, x1, y1]}' },
);

export const planarFlowSchema = z.strictObject({
  type: z.literal('planar'),
  span: length('a positive span (extent along the line of sight) in metres'),
  reference: z.union([z.enum(['top', 'bottom', 'left', 'right']), rectPx], {
    error: '"top", "bottom", "left", "right" or {"rectPx": [x0, y0, x1, y1]}',
  }),
});

export const axisymmetricFlowSchema = z.strictObject({
  type: z.literal('axisymmetric'),
  axis: z.enum(['vertical', 'horizontal'], { error: '"vertical" or "horizontal"' }),
  axisPosition: z.union([z.number().finite().min(0), z.literal('auto')], {
    error: 'a pixel coordinate ≥ 0 (column for a vertical axis, row for a horizontal one) or "auto"',
  }),
});

export const flowSchema = z.discriminatedUnion('type', [planarFlowSchema, axisymmetricFlowSchema], {
  error: 'an object with type "planar" {span, reference} or "axisymmetric" {axis, axisPosition}',
});

export const expectedSchema = z.strictObject(
  {
    densityChange: z.number({ error: 'a non-zero density change in kg/m³' }).finite().optional(),
    temperatureChange: z.number({ error: 'a non-zero temperature change in K' }).finite().optional(),
    lengthScale: length('a positive length scale in metres'),
  },
  { error: 'an object {densityChange | temperatureChange, lengthScale}' },
);

export const setupSchema = z.strictObject(
  {
    camera: cameraSchema,
    geometry: geometrySchema,
    medium: mediumSchema,
    flow: flowSchema,
    expected: expectedSchema.optional(),
  },
  { error: 'a JSON object {camera, geometry, medium, flow, expected?}' },
);

/** A validated setup (docs/setup.md). Lengths in m, densities kg/m³, pressure Pa, wavelength m. */
export type Setup = z.infer<typeof setupSchema>;
/** The flow part of a setup. */
export type FlowSpec = z.infer<typeof flowSchema>;
