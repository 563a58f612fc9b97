// The version written into generated files must be the package's version.
import { readFileSync } from 'node:fs';
import { expect, it } from 'vitest';
import { TOOL_VERSION } from '../core/util/version';
import { ROOT } from './support/load';

it('TOOL_VERSION equals package.json version', () => {
  expect(TOOL_VERSION).toBe(JSON.parse(readFileSync(`${ROOT}/package.json`, 'utf8')).version);
});
