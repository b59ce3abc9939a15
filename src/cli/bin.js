#!/usr/bin/env node
// Entry for the package's `bin`: runs the TypeScript CLI through tsx.
import { register } from 'tsx/esm/api';
register();
// @ts-ignore -- a .ts entry loaded through tsx at run time
await import('./cairnfield.ts');
