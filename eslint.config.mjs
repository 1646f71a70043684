// ESLint runs two kinds of rule here: the imports that keep the layers apart (docs/architecture.md), and no raw fetch in islands.
// Types are the type checker's job; style is not checked. `npm test` runs `npx eslint` before the tests.
import { defineConfig } from 'eslint/config';
import tseslint from 'typescript-eslint';
import * as astroParser from 'astro-eslint-parser';

// Server-only layers under src/lib: they touch the database, the queue, the bucket, sessions, mail or the environment.
const SERVER_LAYERS = 'db|jobs|storage|auth|mail|config';

const ISLAND_MESSAGE =
  'Islands run in the browser: they may not import the server layers (lib/db, lib/jobs, lib/storage, lib/auth, lib/mail, lib/config) '
  + 'or server packages. Put a shared contract in src/lib/schemas and call the server through src/lib/api-client.';
const FETCH_MESSAGE =
  'Islands call the server through a function of src/lib/api-client (one per route), which parses the reply with its schema, '
  + 'takes an AbortSignal and throws ApiError with the server\'s message.';
const PAGES_MESSAGE =
  'Pages and routes stay thin: parse, authorise, call one service, respond. Put queries, transactions and status changes '
  + 'in a service under src/lib/services (or a capability folder such as lib/review), and take the database handle from '
  + 'lib/services/appDb for the guards.';
const STYLE_MESSAGE =
  'No inline styles in components: use Tailwind classes; for a value known only at run time set a CSS variable with '
  + 'useCssVariables (src/components/islands/useCssVariables.ts) and read it in a class, e.g. w-(--bar-width); '
  + 'place viewer markers through the OpenSeadragon overlay API.';
const CORE_MESSAGE =
  'The analysis core (src/lib/analysis) is pure: no file system, network, database, object store, Astro or clock. '
  + 'Take the data as arguments and let the caller (job, script, route) do the I/O.';

export default defineConfig(
  { ignores: ['dist/**', 'node_modules/**', '.astro/**', '.data/**', '.test-data/**', 'assembly/**'] },
  {
    files: ['src/**/*.{ts,tsx,mts,cts}'],
    languageOptions: { parser: tseslint.parser },
    // rules named in existing disable comments must exist, but no other rule is switched on
    plugins: { '@typescript-eslint': tseslint.plugin },
    linterOptions: { reportUnusedDisableDirectives: 'off' },
  },
  {
    files: ['src/components/islands/**/*.{ts,tsx}'],
    ignores: ['src/components/islands/**/__tests__/**'],
    rules: {
      'no-restricted-imports': ['error', {
        patterns: [
          { regex: `(^|/)lib/(${SERVER_LAYERS})(\\.ts)?(/|$)`, message: ISLAND_MESSAGE },
          { regex: '^(node:|pg$|pg-boss$|drizzle-orm|@aws-sdk/|nodemailer$|sharp$|astro:)', message: ISLAND_MESSAGE },
        ],
      }],
    },
  },
  {
    // one typed path per request: islands call the server through src/lib/api-client (schemas, AbortSignal, ApiError)
    files: ['src/components/**/*.{ts,tsx}'],
    ignores: ['src/components/**/__tests__/**'],
    rules: {
      'no-restricted-globals': ['error', { name: 'fetch', message: FETCH_MESSAGE }, { name: 'XMLHttpRequest', message: FETCH_MESSAGE }],
      'no-restricted-properties': ['error',
        { object: 'window', property: 'fetch', message: FETCH_MESSAGE },
        { object: 'globalThis', property: 'fetch', message: FETCH_MESSAGE }],
    },
  },
  {
    // .astro pages: astro-eslint-parser reads the frontmatter (TypeScript) so the page rule below covers them too
    files: ['src/pages/**/*.astro'],
    languageOptions: { parser: astroParser, parserOptions: { parser: tseslint.parser, extraFileExtensions: ['.astro'] } },
  },
  {
    // pages and API routes build no queries: the database layer and the query builder are reached through services
    files: ['src/pages/**/*.{ts,astro}'],
    rules: {
      'no-restricted-imports': ['error', {
        patterns: [
          { regex: '(^|/)lib/db(\\.ts)?(/|$)', message: PAGES_MESSAGE },
          { regex: '^(drizzle-orm|pg$)', message: PAGES_MESSAGE },
        ],
      }],
    },
  },
  {
    // no inline styles: the JSX style prop and <style> elements (eslint-plugin-react is not installed, so a selector)
    files: ['src/components/**/*.{ts,tsx}'],
    ignores: ['src/components/**/__tests__/**'],
    rules: {
      'no-restricted-syntax': ['error',
        { selector: "JSXAttribute[name.name='style']", message: STYLE_MESSAGE },
        { selector: "JSXOpeningElement[name.name='style']", message: STYLE_MESSAGE }],
    },
  },
  {
    files: ['src/lib/analysis/**/*.ts'],
    ignores: ['src/lib/analysis/**/__tests__/**'],
    rules: {
      'no-restricted-imports': ['error', {
        patterns: [
          // Node's I/O modules (with or without node:), server packages, Astro
          {
            regex: '^(node:|(fs|path|os|child_process|worker_threads|cluster|http|https|http2|net|dgram|dns|tls|crypto|stream|readline|module|process|url|perf_hooks|timers)(/|$)|pg$|pg-boss$|drizzle-orm|@aws-sdk/|nodemailer$|sharp$|geotiff$|utif$|astro($|:|/))',
            message: CORE_MESSAGE,
          },
          // the layers around the core, by alias or by a relative path that leaves src/lib/analysis
          { regex: `(^@/lib/(?!analysis/)|^(\\.\\./)+(${SERVER_LAYERS}|imaging|http|uploads|reporting|registration|review|api-client|pages|components)(\\.ts)?(/|$))`, message: CORE_MESSAGE },
        ],
      }],
    },
  },
);
