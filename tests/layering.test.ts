// The layering lint rule (tools/eslint/layering.js) run through ESLint's own API on small sources:
// it must reject what DEVELOPERS.md forbids and accept what it allows.
import { ESLint } from 'eslint';
import { describe, expect, it } from 'vitest';
import { ROOT } from './support/load';

const eslint = new ESLint({ cwd: ROOT });

async function problems(code: string, filePath: string): Promise<string[]> {
  const [r] = await eslint.lintText(code, { filePath: `${ROOT}/${filePath}` });
  return r.messages.filter((m) => m.ruleId === 'twinstep/layering' || m.ruleId === 'no-restricted-globals').map((m) => m.message);
}

describe('layering lint rule', () => {
  it('keeps Node, Electron and UI modules out of core/', async () => {
    expect(await problems("import { readFileSync } from 'node:fs';\nexport const x = readFileSync;\n", 'core/model/x.ts')).toEqual(["core/ must stay pure: 'node:fs' is a Node/desktop module."]);
    expect(await problems("import path from 'path';\nexport const x = path;\n", 'core/util/x.ts')).toHaveLength(1);
    expect(await problems("import { app } from 'electron';\nexport const x = app;\n", 'core/ir/x.ts')).toHaveLength(1);
    expect(await problems("import { SerialPort } from 'serialport';\nexport const x = SerialPort;\n", 'core/decode/x.ts')).toHaveLength(1);
    expect(await problems("import React from 'react';\nexport const x = React;\n", 'core/ir/x.ts')).toEqual(["core/ must stay pure: 'react' is a UI module."]);
  });

  it('keeps DOM and Node globals out of core/', async () => {
    expect(await problems('export const w = window.innerWidth;\n', 'core/model/x.ts')).toHaveLength(1);
    expect(await problems('export const b = Buffer.from([1]);\n', 'core/protocol/x.ts')).toHaveLength(1);
    expect(await problems('export const p = process.argv;\n', 'core/util/x.ts')).toHaveLength(1);
  });

  it('enforces the stage order inside core/', async () => {
    expect(await problems("import { simulate } from '../model/trace';\nexport const x = simulate;\n", 'core/ir/x.ts')).toEqual([
      'core/ir (stage 1) may not import core/model (stage 4): data flows one way.',
    ]);
    expect(await problems("import { evalExpr } from '../ir/eval';\nexport const x = evalExpr;\n", 'core/model/x.ts')).toEqual([]);
    expect(await problems("import { x as y } from '../../main/cli';\nexport const x = y;\n", 'core/model/x.ts')).toEqual(["core/ must not import from 'main/'."]);
  });

  it('keeps Node modules and main/ out of renderer/', async () => {
    expect(await problems("import fs from 'fs';\nexport const x = fs;\n", 'renderer/app/x.ts')).toEqual(["renderer/ runs in a browser: 'fs' is a Node/desktop module; go through the service API."]);
    expect(await problems("import { runCli } from '../../main/cli';\nexport const x = runCli;\n", 'renderer/app/x.ts')).toHaveLength(1);
    expect(await problems("import { checkDesign } from '../../core/check/checker';\nexport const x = checkDesign;\n", 'renderer/app/x.ts')).toEqual([]);
  });
});
