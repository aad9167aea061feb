/** Drivetrain documents: list, get with derived facts, create or replace, delete. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { describeDrivetrain, drivetrainSchema } from '../../solver/drivetrain.js';
import { modeSchema } from './solverSchemas.js';
import type { DrivetrainEntry } from '../../store/registry.js';
import { ApiError } from '../errors.js';
import { errorBodySchema, nameParams } from '../schemas.js';

const drivetrainView = z.object({
  name: z.string(),
  origin: z.enum(['maps', 'data']),
  hash: z.string().describe('SHA-256 of the drivetrain document and both machine documents'),
  document: drivetrainSchema.describe('The drivetrain document'),
  derived: z
    .object({
      name: z.string(),
      k: z.number().describe('k = Zr/Zs'),
      planetTeeth: z.number().describe('Zp = (Zr − Zs)/2'),
      availableModes: z.array(modeSchema),
      ratios: z.record(z.string(), z.number()).describe('Machine speed / wheel speed of each fixed-ratio mode, final drive included'),
      standstillMaxWheelNm: z.number().describe('Largest wheel torque at standstill, N·m'),
      standstillMaxReverseWheelNm: z.number(),
      maxWheelSpeedRpm: z.number(),
      maxReverseWheelSpeedRpm: z.number(),
      maxVehicleSpeedKph: z.number(),
    })
    .describe('Derived facts'),
});

export const drivetrainRoutes: FastifyPluginAsyncZod = async (app) => {
  const view = (e: DrivetrainEntry) => {
    const dt = app.registry.getDrivetrain(e.name)!;
    return { name: e.name, origin: e.origin, hash: app.registry.drivetrainContentHash(e), document: e.doc, derived: describeDrivetrain(dt) };
  };

  app.get(
    '/drivetrains',
    {
      schema: {
        tags: ['drivetrains'],
        summary: 'List drivetrains',
        response: {
          200: z.object({
            drivetrains: z.array(z.object({ name: z.string(), origin: z.enum(['maps', 'data']), sunMachine: z.string(), ringMachine: z.string() })),
          }),
        },
      },
    },
    async () => ({
      drivetrains: app.registry.listDrivetrains().map((e) => ({ name: e.name, origin: e.origin, sunMachine: e.doc.sunMachine, ringMachine: e.doc.ringMachine })),
    }),
  );

  app.get(
    '/drivetrains/:name',
    {
      schema: {
        tags: ['drivetrains'],
        summary: 'A drivetrain with its derived facts',
        params: nameParams,
        response: { 200: drivetrainView, 400: errorBodySchema, 404: errorBodySchema },
      },
    },
    async (req) => {
      const e = app.registry.getDrivetrainEntry(req.params.name);
      if (!e) throw new ApiError('not-found', `no drivetrain named "${req.params.name}"`);
      return view(e);
    },
  );

  app.put(
    '/drivetrains/:name',
    {
      config: { bodyErrorCode: 'drivetrain-invalid' },
      schema: {
        tags: ['drivetrains'],
        summary: 'Create or replace a drivetrain (machines by name; geometry checked)',
        params: nameParams,
        body: drivetrainSchema,
        response: { 200: drivetrainView, 201: drivetrainView, 400: errorBodySchema, 422: errorBodySchema },
      },
    },
    async (req, reply) => {
      const { created, entry } = await app.registry.putDrivetrain(req.params.name, req.body);
      return reply.code(created ? 201 : 200).send(view(entry));
    },
  );

  app.delete(
    '/drivetrains/:name',
    {
      schema: {
        tags: ['drivetrains'],
        summary: 'Delete an uploaded drivetrain',
        params: nameParams,
        response: { 204: z.null().describe('Deleted'), 404: errorBodySchema, 409: errorBodySchema },
      },
    },
    async (req, reply) => {
      await app.registry.deleteDrivetrain(req.params.name);
      return reply.code(204).send(null);
    },
  );
};
