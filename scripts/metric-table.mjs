// Rewrites the README's metric table from the metric catalogue (run after `npm run build`):
//   npm run docs:metrics
import { readFileSync, writeFileSync } from 'node:fs';
import { catalogueMarkdown } from '../dist/src/metrics/catalogue.js';

const START = '<!-- metric table: generated from src/metrics/catalogue.ts by `npm run docs:metrics` -->\n';
const END = '<!-- end of metric table -->';
const readme = readFileSync('README.md', 'utf8');
const a = readme.indexOf(START);
const b = readme.indexOf(END);
if (a < 0 || b < a) throw new Error('README.md has no metric table markers');
writeFileSync('README.md', readme.slice(0, a + START.length) + catalogueMarkdown() + readme.slice(b));
