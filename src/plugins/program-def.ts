/**
 * The definition of an outside-program matcher, as written in an experiment file
 * under `{"program": {...}}`. Validated with zod; every error names the field.
 */
import { z } from 'zod';
import { UsageError } from '../core/errors.js';
import type { ParamSpec } from '../core/matcher.js';
import { checkParamSchema } from './params.js';
import { issuesLine } from '../core/text.js';

const paramName = z.string().regex(/^[A-Za-z_][A-Za-z0-9_]*$/, 'letters, digits and _ only, not starting with a digit');

/** zod schema of one ParamSpec (for program and module schemas). */
export const paramSpecSchema = z.discriminatedUnion('type', [
  z.strictObject({
    name: paramName,
    type: z.enum(['int', 'number']),
    default: z.number(),
    min: z.number().optional(),
    max: z.number().optional(),
    odd: z.boolean().optional(),
    description: z.string().default(''),
  }),
  z.strictObject({ name: paramName, type: z.literal('boolean'), default: z.boolean(), description: z.string().default('') }),
  z.strictObject({
    name: paramName,
    type: z.literal('enum'),
    default: z.string(),
    values: z.array(z.string().min(1)).min(1),
    description: z.string().default(''),
  }),
]);

/** Placeholders allowed in a command template. */
export const PAIR_PLACEHOLDERS = ['left', 'right', 'out', 'conf', 'minDisparity', 'maxDisparity', 'pairId'] as const;

export const programMatcherDefSchema = z
  .strictObject({
    /** Id used in labels and results; letters, digits, `_ . -`. */
    id: z.string().regex(/^[A-Za-z][A-Za-z0-9_.-]*$/, 'start with a letter; letters, digits, _ . - only'),
    summary: z.string().optional(),
    /** Bump when the program's output changes for the same input (part of the code hash). */
    version: z.string().optional(),
    /**
     * argv template (no shell). Placeholders: {left} {right} {out} {conf} {minDisparity} {maxDisparity} {pairId} {param:NAME}.
     * {conf} is a path where the program may write a confidence map (PFM, float32, higher = more trusted).
     */
    command: z.array(z.string().min(1)).min(1),
    mode: z.enum(['per-pair', 'long-lived']).default('per-pair'),
    output: z.strictObject({
      format: z.enum(['pfm', 'png', 'npy']),
      /** PNG: stored = round(d * scale). Required for png. */
      scale: z.number().positive().optional(),
      /** PNG: the invalid code (default 0). PFM/NPY: a sentinel value read as invalid. */
      invalid: z.number().optional(),
    }),
    /** -1 when the program reports x_right - x_left. */
    disparitySign: z.union([z.literal(1), z.literal(-1)]).default(1),
    /** Multiply the program's values by this to get pixels (e.g. 1/16 for fixed point). */
    disparityScale: z.number().positive().default(1),
    /** gray: 8-bit luminance PNGs written for the program; color: the original files. */
    input: z.enum(['gray', 'color']).default('color'),
    /** Pad the images to a multiple of N (right and bottom, edge replication); output cropped back. */
    pad: z.number().int().min(1).max(4096).optional(),
    /** Resample the images by this factor; output resampled back and divided by the factor. */
    resize: z.number().positive().max(16).optional(),
    timeoutMs: z.number().int().positive().default(300_000),
    env: z.record(z.string(), z.string()).optional(),
    /** Working directory, relative to the experiment file's folder (default: that folder). */
    cwd: z.string().optional(),
    params: z.array(paramSpecSchema).default([]),
    /** Constraints across numeric parameters: params[lower] <= params[upper]. */
    relations: z.array(z.strictObject({ lower: z.string(), upper: z.string() })).optional(),
  })
  .superRefine((def, ctx) => {
    if (def.output.format === 'png' && def.output.scale === undefined) {
      ctx.addIssue({ code: 'custom', path: ['output', 'scale'], message: 'required for png output (stored = round(d * scale))' });
    }
    const paramNames = new Set(def.params.map((p) => p.name));
    const numeric = new Set(def.params.filter((p) => p.type === 'int' || p.type === 'number').map((p) => p.name));
    (def.relations ?? []).forEach((r, i) => {
      for (const side of ['lower', 'upper'] as const) {
        if (!numeric.has(r[side])) ctx.addIssue({ code: 'custom', path: ['relations', i, side], message: `${r[side]} is not a declared numeric parameter` });
      }
    });
    def.command.forEach((arg, i) => {
      for (const m of arg.matchAll(/\{([^{}]*)\}/g)) {
        const name = m[1];
        if (name.startsWith('param:')) {
          if (!paramNames.has(name.slice(6))) {
            ctx.addIssue({ code: 'custom', path: ['command', i], message: `{${name}} names no declared parameter` });
          }
        } else if (!(PAIR_PLACEHOLDERS as readonly string[]).includes(name)) {
          ctx.addIssue({ code: 'custom', path: ['command', i], message: `unknown placeholder {${name}}` });
        } else if (def.mode === 'long-lived') {
          ctx.addIssue({
            code: 'custom',
            path: ['command', i],
            message: `{${name}} is per pair; a long-lived program gets it in each request`,
          });
        }
      }
    });
    if (def.mode === 'per-pair') {
      const all = def.command.join(' ');
      for (const need of ['{left}', '{right}', '{out}']) {
        if (!all.includes(need)) ctx.addIssue({ code: 'custom', path: ['command'], message: `must contain ${need}` });
      }
    }
  });

export type ProgramMatcherDefInput = z.input<typeof programMatcherDefSchema>;
export type ProgramMatcherDef = z.output<typeof programMatcherDefSchema>;

/**
 * Validate a program definition. `option` names where it came from (e.g. `matchers[2].program`);
 * errors are one-line UsageErrors naming each bad field.
 */
export function parseProgramMatcherDef(raw: unknown, option = 'program'): ProgramMatcherDef {
  const r = programMatcherDefSchema.safeParse(raw);
  if (!r.success) throw new UsageError(option, issuesLine(r.error.issues));
  checkParamSchema(`params`, r.data.id, r.data.params as ParamSpec[], option);
  return r.data;
}
