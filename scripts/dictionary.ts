// Rewrites the generated parts of the documentation from the data dictionary (src/records/): docs/dictionary.md and
// the column list between the markers in README.md. test/records-dictionary.test.ts fails when they are stale.
import { readFileSync, writeFileSync } from 'node:fs';
import { dictionaryMarkdown, readmeColumns } from '../src/records/describe.ts';

export const BEGIN = '<!-- columns: generated from src/records by `npm run dictionary` -->';
export const END = '<!-- end of generated columns -->';

writeFileSync('docs/dictionary.md', dictionaryMarkdown());
const readme = readFileSync('README.md', 'utf8');
const a = readme.indexOf(BEGIN), b = readme.indexOf(END);
if (a < 0 || b < a) throw new Error('README.md: generated-columns markers not found');
writeFileSync('README.md', readme.slice(0, a + BEGIN.length) + '\n' + readmeColumns() + '\n' + readme.slice(b));
console.log('wrote docs/dictionary.md and the README column list');
