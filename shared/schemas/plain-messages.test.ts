import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { messagesByField } from './plain-messages';
import { createStationSchema } from './stations';
import { registerUnitSchema } from './units';
import {
  bulkHoldSchema,
  holdUnitSchema,
  newInvestigationSchema,
  releaseSchema,
  unitSearchQuerySchema,
} from './quality';
import { measurementSchema } from './measurement';
import { createUserSchema, updateUserSchema } from './users';
import { passwordSignInSchema, badgeSignInSchema } from './auth';

/** Library wording that must never reach a person (zod's English defaults). */
const LIBRARY_WORDING =
  /Too big|Too small|Invalid input|Invalid option|expected .* to (have|be)|received|<=|>=/;

describe('plain validation messages', () => {
  it('flags a 240-character station name as too long, in plain words', () => {
    const parsed = createStationSchema.safeParse({
      name: 'S'.repeat(240),
      line: 'Line 1',
      allowedModelIds: ['00000000-0000-4000-8000-000000000000'],
    });
    expect(parsed.success).toBe(false);
    expect(messagesByField(parsed.error!)).toEqual({
      name: 'Too long: at most 40 characters (this has 240).',
    });
  });

  it('says what is wrong with a missing field, a wrong type, an unknown choice and a bad id', () => {
    const parsed = createStationSchema.safeParse({ line: 7, allowedModelIds: ['x'] });
    const messages = parsed.error!.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
    expect(messages).toEqual([
      'name: Required.',
      'line: Must be text.',
      'allowedModelIds.0: Not a valid id: expected an id as the application gives it (a UUID).',
    ]);
  });

  it('never shows library wording for any input to the forms and requests people fill in (fuzzed)', () => {
    const schemas = [
      createStationSchema,
      registerUnitSchema,
      holdUnitSchema,
      bulkHoldSchema,
      releaseSchema,
      newInvestigationSchema,
      unitSearchQuerySchema,
      measurementSchema,
      createUserSchema,
      updateUserSchema,
      passwordSignInSchema,
      badgeSignInSchema,
    ];
    fc.assert(
      fc.property(
        fc.constantFrom(...schemas),
        fc.anything({ maxDepth: 2 }),
        fc.object({ maxDepth: 2 }),
        (schema, a, b) => {
          for (const input of [a, b]) {
            const parsed = schema.safeParse(input);
            if (parsed.success) continue;
            for (const issue of parsed.error.issues) expect(issue.message).not.toMatch(LIBRARY_WORDING);
          }
        },
      ),
      { numRuns: 500 },
    );
  });
});
