#!/usr/bin/env node
import { register } from 'tsx/esm/api';
// core's plain-JS dependencies first, natively: through tsx, h5wasm alone costs ~2 s and ~600 MB RSS
const { preloadDependencies } = await import(new URL('./batch/preloadDependencies.mjs', import.meta.resolve('@rhofield/core')).href);
await preloadDependencies();
register();
await import('../src/main.ts');
