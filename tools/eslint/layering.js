// Local ESLint rule: keeps each folder to the runtime it may use and keeps data flowing
// one way through the stages of core/. See DEVELOPERS.md, "Layering".
import path from 'node:path';
import { builtinModules } from 'node:module';

const NODE_BUILTINS = new Set([...builtinModules, ...builtinModules.map((m) => `node:${m}`)]);

/** Stage order inside core/: a stage may import only from stages with a smaller rank. */
export const CORE_STAGE_RANK = {
  util: 0,
  ir: 1,
  lang: 2,
  check: 3,
  model: 4,
  synth: 5,
  hdl: 6,
  protocol: 7,
  probe: 8,
  decode: 9,
  compare: 10,
  capture: 11,
  export: 12,
  services: 13,
};

const NODE_ONLY_PACKAGES = ['electron', 'serialport', '@serialport/', 'ws', 'espresso-logic-minimizer'];
const UI_PACKAGES = ['react', 'react-dom', 'elkjs'];

function topFolder(root, file) {
  const rel = path.relative(root, file).split(path.sep);
  return rel;
}

function isPackage(spec, list) {
  return list.some((p) => spec === p || spec.startsWith(p.endsWith('/') ? p : `${p}/`));
}

export const layeringRule = {
  meta: {
    type: 'problem',
    docs: { description: 'Enforce the runtime and stage layering of core/, renderer/ and main/.' },
    schema: [],
    messages: {
      nodeInCore: "core/ must stay pure: '{{spec}}' is a Node/desktop module.",
      uiInCore: "core/ must stay pure: '{{spec}}' is a UI module.",
      nodeInRenderer: "renderer/ runs in a browser: '{{spec}}' is a Node/desktop module; go through the service API.",
      outOfCore: "core/ must not import from '{{target}}/'.",
      rendererToMain: "renderer/ must not import main/ code; use the typed service API.",
      stageOrder: "core/{{from}} (stage {{fromRank}}) may not import core/{{to}} (stage {{toRank}}): data flows one way.",
      unknownStage: "core/{{stage}} is not a declared stage; add it to CORE_STAGE_RANK in tools/eslint/layering.js.",
    },
  },
  create(context) {
    const root = context.cwd ?? process.cwd();
    const filename = context.filename ?? context.getFilename();
    const parts = topFolder(root, filename);
    const area = parts[0];
    const stage = area === 'core' ? parts[1] : undefined;

    function check(node, spec) {
      if (typeof spec !== 'string') return;
      if (area === 'core') {
        if (NODE_BUILTINS.has(spec) || isPackage(spec, NODE_ONLY_PACKAGES)) {
          context.report({ node, messageId: 'nodeInCore', data: { spec } });
          return;
        }
        if (isPackage(spec, UI_PACKAGES)) {
          context.report({ node, messageId: 'uiInCore', data: { spec } });
          return;
        }
        if (spec.startsWith('.')) {
          const target = path.resolve(path.dirname(filename), spec);
          const tparts = topFolder(root, target);
          if (tparts[0] !== 'core') {
            context.report({ node, messageId: 'outOfCore', data: { target: tparts[0] } });
            return;
          }
          const to = tparts[1];
          if (to === stage || tparts.length < 3) return;
          const fromRank = CORE_STAGE_RANK[stage];
          const toRank = CORE_STAGE_RANK[to];
          if (fromRank === undefined) {
            context.report({ node, messageId: 'unknownStage', data: { stage } });
            return;
          }
          if (toRank === undefined) {
            context.report({ node, messageId: 'unknownStage', data: { stage: to } });
            return;
          }
          if (toRank >= fromRank) {
            context.report({ node, messageId: 'stageOrder', data: { from: stage, to, fromRank, toRank } });
          }
        }
      } else if (area === 'renderer') {
        if (NODE_BUILTINS.has(spec) || isPackage(spec, NODE_ONLY_PACKAGES)) {
          context.report({ node, messageId: 'nodeInRenderer', data: { spec } });
          return;
        }
        if (spec.startsWith('.')) {
          const target = path.resolve(path.dirname(filename), spec);
          if (topFolder(root, target)[0] === 'main') context.report({ node, messageId: 'rendererToMain' });
        }
      }
    }

    return {
      ImportDeclaration(node) { check(node, node.source.value); },
      ExportNamedDeclaration(node) { if (node.source) check(node, node.source.value); },
      ExportAllDeclaration(node) { check(node, node.source.value); },
      ImportExpression(node) { if (node.source.type === 'Literal') check(node, node.source.value); },
      CallExpression(node) {
        if (node.callee.type === 'Identifier' && node.callee.name === 'require' && node.arguments[0]?.type === 'Literal') {
          check(node, node.arguments[0].value);
        }
      },
    };
  },
};

export default { rules: { layering: layeringRule } };
