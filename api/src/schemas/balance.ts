import { scenarioSchema } from '@crackpoint/sim-core';
import { z } from 'zod';

/** sim-core's BalanceResult as the API sends it; sim-core computes it, this only describes it. */
const boostOutcomeSchema = z.discriminatedUnion('status', [
  z.object({ status: z.literal('opens'), boostPa: z.number() }),
  z.object({ status: z.literal('never-opens'), reason: z.string() }),
  z.object({ status: z.literal('open-at-zero-boost'), boostPa: z.number() }),
]);

const forceTermSchema = z.object({
  key: z.enum(['drive', 'bottom', 'spring', 'top', 'downstream']),
  forceN: z.number(),
  pressurePa: z.number(),
  areaM2: z.number(),
});

export const balanceResultSchema = z.object({
  areas: z.object({
    valveM2: z.number(),
    shaftM2: z.number(),
    actuatorM2: z.number(),
    valveBackM2: z.number(),
    bottomM2: z.number(),
    topM2: z.number(),
  }),
  seatForceN: z.number(),
  rateNPerM: z.number(),
  maxLiftM: z.number(),
  chambers: z.object({ alphaTop: z.number(), betaTopPa: z.number(), alphaBottom: z.number(), betaBottomPa: z.number() }),
  ratio: z.number(),
  driveAtZeroBoostPa: z.number(),
  crack: boostOutcomeSchema,
  fullOpen: boostOutcomeSchema,
  forcesAtCrack: z.array(forceTermSchema).nullable(),
  ratioSweep: z.array(z.object({ ratio: z.number(), crack: boostOutcomeSchema, fullOpen: boostOutcomeSchema })),
  overLimit: z.boolean(),
  supply: z
    .object({
      kind: z.enum(['co2', 'compressor']),
      sourcePa: z.number().nullable(),
      deliveredPa: z.number(),
      belowSetpoint: z.boolean(),
      bottle: z.record(z.string(), z.unknown()).optional(),
      warning: z.string().optional(),
    })
    .nullable(),
});

/** The scenario as sim-core's own schema has it. */
export const balanceBodySchema = z.strictObject({ scenario: scenarioSchema });

export const balanceResponseSchema = z.object({ balance: balanceResultSchema });
