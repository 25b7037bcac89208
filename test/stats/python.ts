/** Run a Python snippet with JSON on stdin and JSON on stdout (outside reference). */
import { PYTHON, runPython as run } from '../support/python.js';

export function runPython(code: string, input: unknown, python = PYTHON): any {
  return JSON.parse(run({ code, python, input: JSON.stringify(input) }));
}
