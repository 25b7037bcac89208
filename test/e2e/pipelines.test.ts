/**
 * The CI pipelines the README shows (examples/ci/), run as scripts: their YAML is read by
 * an outside parser (PyYAML in Debian's python3), each step's or script line's command is
 * run by bash in a project folder, with the semantics of the CI system that matter here
 * (GitHub Actions: a failed step fails the job and later steps run only under
 * `if: always()`; GitLab CI: the script stops at the first failing line, `after_script`
 * always runs). `npm ci` and `uses:` steps are what the hosted runner does before and
 * after (install, checkout, artifact upload): they are recorded, not run. `gh` and `curl`
 * are stubs on the PATH that record what the pipeline posts.
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEBIAN_PYTHON, runPython } from '../support/python.js';
import { BIN, REPO, builtCliExists } from './helpers.js';

const EXAMPLES = join(REPO, 'examples', 'ci');
const root = mkdtempSync(join(tmpdir(), 'parallax-ci-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

/** A project folder as a user's repository would hold it: the example files, `npx parallax` resolving to this build. */
function project(name: string): string {
  const dir = join(root, name);
  mkdirSync(join(dir, 'node_modules', '.bin'), { recursive: true });
  for (const f of readdirSync(EXAMPLES)) if (f.endsWith('.json')) copyFileSync(join(EXAMPLES, f), join(dir, f));
  writeFileSync(join(dir, 'package.json'), JSON.stringify({ name: `stereo-${name}`, private: true }));
  symlinkSync(BIN, join(dir, 'node_modules', '.bin', 'parallax'));
  return dir;
}

/** Stubs of `gh` and `curl` that append their arguments and the posted file to `posted.log`. */
function stubs(dir: string): string {
  const bin = join(dir, 'stub-bin');
  mkdirSync(bin, { recursive: true });
  const stub = (name: string, fileArg: string): void => {
    const f = join(bin, name);
    writeFileSync(
      f,
      `#!/bin/bash\necho "${name} $*" >> posted.log\nprev=""\nfor a in "$@"; do\n  if [ "$prev" = "${fileArg}" ]; then file="\${a#body@}"; cat "$file" >> posted.log || exit 3; fi\n  prev="$a"\ndone\n`,
    );
    chmodSync(f, 0o755);
  };
  stub('gh', '--body-file');
  stub('curl', '--data-urlencode');
  return bin;
}

function bash(command: string, cwd: string, env: Record<string, string>): number {
  const r = spawnSync('bash', ['-e', '-c', command], { cwd, encoding: 'utf8', timeout: 180_000, env: { ...process.env, FORCE_COLOR: '0', ...env } });
  if (r.status !== 0 && r.status !== 1) throw new Error(`step failed unexpectedly (${String(r.status)}): ${command}\n${r.stderr}`);
  return r.status ?? -1;
}

/** A YAML file as JSON, by PyYAML (Debian's python3-yaml). */
function yaml(file: string): any {
  return JSON.parse(runPython({ python: DEBIAN_PYTHON, code: 'import sys, json, yaml\nprint(json.dumps(yaml.safe_load(sys.stdin.read())))', input: readFileSync(file, 'utf8') }));
}

const GITHUB_CONTEXT: Record<string, string> = { 'github.token': 'token-for-tests', 'github.event.pull_request.number': '17' };

/** Run a GitHub Actions job's steps; returns the job's outcome and what ran. */
function runGithubJob(job: any, dir: string, path: string): { failed: boolean; ran: string[]; recorded: string[] } {
  let failed = false;
  const ran: string[] = [];
  const recorded: string[] = [];
  for (const step of job.steps) {
    const always = typeof step.if === 'string' && step.if.includes('always()');
    if (failed && !always) continue;
    if (step.uses) {
      recorded.push(step.uses);
      continue;
    }
    const expand = (s: string): string =>
      s.replace(/\$\{\{\s*([^}]+?)\s*\}\}/g, (_, expr: string) => {
        const v = GITHUB_CONTEXT[expr];
        if (v === undefined) throw new Error(`no value for \${{ ${expr} }} in the test's context`);
        return v;
      });
    const command = expand(step.run);
    if (command.trim() === 'npm ci') {
      recorded.push(command);
      continue;
    }
    const env: Record<string, string> = { PATH: `${path}:${process.env.PATH}` };
    for (const [k, v] of Object.entries(step.env ?? {})) env[k] = expand(String(v));
    ran.push(command);
    if (bash(command, dir, env) !== 0) failed = true;
  }
  return { failed, ran, recorded };
}

function runGitlabJob(job: any, dir: string, path: string, env: Record<string, string>): { failed: boolean; ran: string[] } {
  const full = { ...env, PATH: `${path}:${process.env.PATH}` };
  let failed = false;
  const ran: string[] = [];
  for (const line of job.script as string[]) {
    if (line.trim() === 'npm ci') continue;
    ran.push(line);
    if (bash(line, dir, full) !== 0) {
      failed = true;
      break;
    }
  }
  for (const line of job.after_script as string[]) bash(line, dir, full);
  return { failed, ran };
}

/** Render the dock scenes and commit a baseline run, as the README says to do once on the main branch. */
function withBaseline(dir: string): void {
  expect(bash('npx parallax dataset synth --out datasets/dock --width 128 --height 96 --pairs 6 -q', dir, {})).toBe(0);
  expect(bash('npx parallax run stereo-baseline.json --out stereo-baseline --no-cache -q', dir, {})).toBe(0);
}

beforeAll(() => {
  if (!builtCliExists()) throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
});

describe('the README shows the example pipelines verbatim', () => {
  it('both YAML files appear in README.md as they are in examples/ci/', () => {
    const readme = readFileSync(join(REPO, 'README.md'), 'utf8');
    for (const f of ['stereo-gate.github.yml', 'stereo-gate.gitlab-ci.yml']) expect(readme).toContain(readFileSync(join(EXAMPLES, f), 'utf8'));
  });
});

describe('GitHub Actions workflow', () => {
  const wf = (): any => yaml(join(EXAMPLES, 'stereo-gate.github.yml'));

  it('a change that keeps the gates passes the job and posts compare.md on the pull request', () => {
    const dir = project('gh-pass');
    withBaseline(dir);
    const r = runGithubJob(wf().jobs.gate, dir, stubs(dir));
    expect(r.failed).toBe(false);
    expect(r.recorded).toEqual(['actions/checkout@v4', 'actions/setup-node@v4', 'npm ci', 'actions/upload-artifact@v4']);
    const posted = readFileSync(join(dir, 'posted.log'), 'utf8');
    expect(posted).toContain('gh pr comment 17 --body-file runs/candidate/compare.md');
    expect(posted).toMatch(/## Stereo accuracy: candidate against baseline\n\n\*\*all 2 gate checks pass\*\*/);
  }, 180_000);

  it('a change that breaks a gate fails the job, and the verdict is still posted', () => {
    const dir = project('gh-fail');
    withBaseline(dir);
    // Block matching under the same name: far worse than SGM on visible/over2px.
    writeFileSync(join(dir, 'stereo-candidate.json'), JSON.stringify({ name: 'candidate', datasets: ['datasets/dock'], matchers: [{ id: 'block', name: 'production' }] }));
    const r = runGithubJob(wf().jobs.gate, dir, stubs(dir));
    expect(r.failed).toBe(true);
    const posted = readFileSync(join(dir, 'posted.log'), 'utf8');
    expect(posted).toContain('gh pr comment 17');
    expect(posted).toMatch(/gate checks FAIL/);
    expect(posted).toContain('matcher: sgm → block');
    expect(existsSync(join(dir, 'runs', 'candidate', 'gates.xml'))).toBe(true);
  }, 180_000);
});

describe('GitLab CI job', () => {
  it('a change that breaks a gate fails the job, posts the note and leaves a JUnit report GitLab can read', () => {
    const jobs = yaml(join(EXAMPLES, 'stereo-gate.gitlab-ci.yml'));
    const job = jobs['stereo-gate'];
    const dir = project('gl-fail');
    withBaseline(dir);
    writeFileSync(join(dir, 'stereo-candidate.json'), JSON.stringify({ name: 'candidate', datasets: ['datasets/dock'], matchers: [{ id: 'block', name: 'production' }] }));
    const env = { CI_API_V4_URL: 'https://gitlab.invalid/api/v4', CI_PROJECT_ID: '42', CI_MERGE_REQUEST_IID: '5', STEREO_BOT_TOKEN: 'token-for-tests' };
    const r = runGitlabJob(job, dir, stubs(dir), env);
    expect(r.failed).toBe(true);
    expect(r.ran.at(-1)).toMatch(/^npx parallax compare /); // the gate is the line that failed
    const posted = readFileSync(join(dir, 'posted.log'), 'utf8');
    expect(posted).toContain('curl --fail --request POST --header PRIVATE-TOKEN: token-for-tests --data-urlencode body@runs/candidate/compare.md https://gitlab.invalid/api/v4/projects/42/merge_requests/5/notes');
    expect(posted).toMatch(/gate checks FAIL/);
    const junit = join(dir, job.artifacts.reports.junit);
    const failures = runPython({ python: DEBIAN_PYTHON, code: 'import sys, xml.etree.ElementTree as ET\nprint(ET.parse(sys.argv[1] + "/g.xml").getroot().get("failures"))', files: { 'g.xml': readFileSync(junit) } });
    expect(Number(failures)).toBeGreaterThanOrEqual(1);
  }, 180_000);
});
