/**
 * Setup-file errors named by the file, with no heavy imports (the `plan` command's start-up uses it).
 */
import { RhofieldError } from '@rhofield/core/errors';

/**
 * Name the setup file in a library error about setup keys ("for camera.sensorPx" → "for FILE:
 * camera.sensorPx"); other usage errors get "FILE: " in front when `prefixOthers` (the call was about
 * the setup alone). Other errors pass.
 */
export function withSetupFile(e: unknown, file: string, prefixOthers = true): unknown {
  if (!(e instanceof RhofieldError) || e.kind !== 'usage' || e.message.includes(file)) return e;
  const keyed = e.message.replace(/ for ((?:camera|geometry|medium|flow|expected)\b[\w.[\]]*|lensToBackground) but received /, (_m, k: string) => ` for ${file}: ${k === 'lensToBackground' ? 'geometry.lensToBackground' : k} but received `);
  if (keyed !== e.message) return new RhofieldError(e.kind, keyed);
  return prefixOthers ? new RhofieldError(e.kind, `${file}: ${e.message}`) : e;
}
