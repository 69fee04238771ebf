/**
 * Render any view with the figure module: scalar views with their grey or colour scale (and
 * contour lines), colour schlieren with a colour-wheel key.
 */
import { renderFieldFigure, renderRgbFigure, type Figure, type FigureFrameOptions } from '../io/renderFieldFigure.js';
import { formatValue } from '../io/niceTicks.js';
import { directionColour } from './colourSchlieren.js';
import type { ColourView, ScalarView } from './types.js';

/**
 * Figure of a view.
 * @param view a {@link ScalarView} or {@link ColourView}.
 * @param frame axes (cell centres in mm), title, size, optional vectors/mask.
 */
export function viewFigure(view: ScalarView | ColourView, frame: FigureFrameOptions): Figure {
  if (view.kind === 'colour-schlieren') {
    const m = view.maxMagnitude;
    return renderRgbFigure(view.image, {
      ...frame,
      key: { type: 'wheel', label: 'hue: direction', maxLabel: `brightness: magnitude\nfull at ${formatValue(m)} ${view.unit}` },
      wheelColour: directionColour,
    });
  }
  return renderFieldFigure(view.field, {
    ...frame,
    quantity: view.quantity,
    unit: view.unit,
    colormap: view.colormap,
    range: view.range,
    ...(view.contours ? { contours: view.contours } : {}),
  });
}
