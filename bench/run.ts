/**
 * `npm run bench`: every figure the issues ask for, measured in one run.
 * Each section lives in its own file and prints a Markdown block to stdout.
 *   npm run bench                 all sections
 *   npm run bench -- scoring      one section (names below)
 */
type Section = { name: string; load: () => Promise<{ default: () => Promise<void> }> };

const SECTIONS: Section[] = [
  { name: 'scoring', load: () => import('./scoring.js') },
  { name: 'report', load: () => import('./report.js') },
  { name: 'matchers', load: () => import('./matchers.js') },
  { name: 'runner', load: () => import('./runner.js') },
  { name: 'synth', load: () => import('./synth.js') },
  { name: 'regions', load: () => import('./regions.js') },
  { name: 'png', load: () => import('./png.js') },
];

const wanted = process.argv.slice(2);
const chosen = wanted.length ? SECTIONS.filter((s) => wanted.includes(s.name)) : SECTIONS;
if (wanted.length && chosen.length !== wanted.length) {
  const known = SECTIONS.map((s) => s.name).join(', ');
  process.stderr.write(`bench: unknown section in ${wanted.join(', ')}; known: ${known}\n`);
  process.exit(2);
}
for (const s of chosen) {
  process.stdout.write(`\n## ${s.name}\n\n`);
  const mod = await s.load();
  await mod.default();
}
