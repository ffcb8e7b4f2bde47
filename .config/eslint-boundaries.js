// A small local ESLint rule for the import zones DEVELOPERS.md promises. It resolves each relative
// import against the importing file, and each `#` alias through package.json "imports", so `../../line/api/x` is seen for what it is (another feature),
// which a pattern on the import text alone cannot do.
import { readFileSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');

/** The `#` aliases of package.json "imports": '#shared/' → 'shared/'. */
const aliases = Object.entries(JSON.parse(readFileSync(path.join(root, 'package.json'), 'utf8')).imports ?? {})
  .filter(([k, v]) => k.endsWith('/*') && typeof v === 'string' && v.endsWith('/*'))
  .map(([k, v]) => ({ prefix: k.slice(0, -1), dir: v.slice(2, -1) }));

/** The repository-relative path an import names, or null for a package. */
const targetOf = (file, source) => {
  if (source.startsWith('.')) return path.relative(root, path.resolve(path.dirname(file), source)).split(path.sep).join('/');
  const alias = aliases.find((a) => source.startsWith(a.prefix));
  return alias ? alias.dir + source.slice(alias.prefix.length) : null;
};

/** `src/features/<x>/…` → x; `server/modules/<x>/…` → x. */
const zoneOf = (rel) => {
  const f = /^src\/features\/([^/]+)\//.exec(rel);
  if (f) return { kind: 'feature', name: f[1] };
  const m = /^server\/modules\/([^/]+)\//.exec(rel);
  if (m) return { kind: 'module', name: m[1] };
  return null;
};

const typeOnly = (node) =>
  node.importKind === 'type' ||
  node.exportKind === 'type' ||
  (node.specifiers?.length > 0 && node.specifiers.every((s) => s.importKind === 'type' || s.exportKind === 'type'));

const rule = {
  meta: {
    type: 'problem',
    docs: { description: 'Client features do not import each other; modules read other modules only through their repository or service.' },
    messages: {
      feature:
        'Client feature "{{from}}" imports feature "{{to}}": features never import each other; compose them in a route module (src/app/routes) or move the shared piece to src/components or src/lib.',
      table:
        "Imports {{target}}, another module's table: read \"{{to}}\" data through its repository or service (add a small function there).",
    },
    schema: [
      {
        type: 'object',
        properties: {
          /**
           * Modules that own no table and may read every module's tables in one statement (the read
           * models whose joins are needed for speed; DEVELOPERS.md says which and why).
           */
          readModels: { type: 'array', items: { type: 'string' } },
        },
        additionalProperties: false,
      },
    ],
  },
  create(context) {
    const file = context.filename ?? context.getFilename();
    const fromRel = path.relative(root, file).split(path.sep).join('/');
    const from = zoneOf(fromRel);
    const readModel = from?.kind === 'module' && (context.options[0]?.readModels ?? []).includes(from.name);
    const check = (node) => {
      const source = node.source?.value;
      if (typeof source !== 'string') return;
      const targetRel = targetOf(file, source);
      if (targetRel === null) return;
      const to = zoneOf(`${targetRel}/`.replace(/\/+$/, '/')) ?? zoneOf(targetRel);
      if (from?.kind === 'feature' && to?.kind === 'feature' && to.name !== from.name) {
        context.report({ node, messageId: 'feature', data: { from: from.name, to: to.name } });
        return;
      }
      const isTable = /\.table(\.ts)?$/.test(targetRel);
      if (isTable && to?.kind === 'module' && to.name !== from?.name && !typeOnly(node) && !readModel) {
        context.report({ node, messageId: 'table', data: { target: targetRel, to: to.name } });
      }
    };
    return {
      ImportDeclaration: check,
      ExportNamedDeclaration: check,
      ExportAllDeclaration: check,
      ImportExpression: check,
    };
  },
};

export const boundaries = { rules: { boundaries: rule } };
