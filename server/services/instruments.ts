// Instrument profiles of a firm: the a-priori precision an upload is weighted
// with (distance a mm + b ppm, direction, zenith, centering, levelling per √km).
// Example presets are invented and labelled so, never a maker's specification.
import { and, asc, eq, sql } from 'drizzle-orm'
import type { InstrumentBody, InstrumentUpdate } from '../../shared/schemas/fielddata'
import { useDb } from '../db/client'
import { instrumentProfiles, observationSets } from '../db/schema'
import { DomainError, notFound } from '../utils/errors'
import type { FirmContext } from '../utils/guard'
import { audit } from './audit'

type Row = typeof instrumentProfiles.$inferSelect

export interface InstrumentDto extends InstrumentBody {
  id: number
  isExample: boolean
  /** shown beside example presets */
  label: string | null
  usedBySets?: number
  updatedAt: string
}

export const EXAMPLE_LABEL = 'example, not a maker\'s specification'

function dto(r: Row, usedBySets?: number): InstrumentDto {
  return {
    id: r.id, name: r.name, distanceMm: r.distanceMm, distancePpm: r.distancePpm, directionArcsec: r.directionArcsec,
    zenithArcsec: r.zenithArcsec, centeringInstrumentMm: r.centeringInstrumentMm, centeringTargetMm: r.centeringTargetMm,
    levellingMmPerSqrtKm: r.levellingMmPerSqrtKm, isExample: r.isExample, label: r.isExample ? EXAMPLE_LABEL : null,
    ...(usedBySets === undefined ? {} : { usedBySets }), updatedAt: r.updatedAt.toISOString(),
  }
}

export async function listInstruments(ctx: FirmContext): Promise<InstrumentDto[]> {
  const rows = await useDb().select({
    p: instrumentProfiles,
    // Qualified by hand: without a join drizzle renders columns unqualified, which the subquery would bind to s.
    n: sql<number>`(select count(*)::int from ${observationSets} s where s.firm_id = "instrument_profiles"."firm_id" and s.instrument_profile_id = "instrument_profiles"."id")`,
  }).from(instrumentProfiles).where(eq(instrumentProfiles.firmId, ctx.firm.id)).orderBy(asc(instrumentProfiles.name))
  return rows.map((r) => dto(r.p, r.n))
}

async function find(ctx: FirmContext, id: number): Promise<Row> {
  const [r] = await useDb().select().from(instrumentProfiles).where(and(eq(instrumentProfiles.firmId, ctx.firm.id), eq(instrumentProfiles.id, id))).limit(1)
  if (!r) throw notFound('No such instrument profile')
  return r
}

const taken = (name: string) => new DomainError('conflict', `An instrument profile named '${name}' already exists in this firm`)

export async function createInstrument(ctx: FirmContext, body: InstrumentBody): Promise<InstrumentDto> {
  return useDb().transaction(async (tx) => {
    const [r] = await tx.insert(instrumentProfiles).values({ firmId: ctx.firm.id, ...body }).onConflictDoNothing().returning()
    if (!r) throw taken(body.name)
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'instrument.create', entityType: 'instrument_profile', entityId: r.id, after: dto(r) })
    return dto(r)
  })
}

/** Editing an example preset makes it the firm's own: the example label goes. */
export async function updateInstrument(ctx: FirmContext, id: number, body: InstrumentUpdate): Promise<InstrumentDto> {
  const before = await find(ctx, id)
  return useDb().transaction(async (tx) => {
    if (body.name && body.name !== before.name) {
      const [clash] = await tx.select({ id: instrumentProfiles.id }).from(instrumentProfiles)
        .where(and(eq(instrumentProfiles.firmId, ctx.firm.id), eq(instrumentProfiles.name, body.name))).limit(1)
      if (clash) throw taken(body.name)
    }
    const [r] = await tx.update(instrumentProfiles).set({ ...body, isExample: false })
      .where(and(eq(instrumentProfiles.firmId, ctx.firm.id), eq(instrumentProfiles.id, id))).returning()
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'instrument.update', entityType: 'instrument_profile', entityId: id, before: dto(before), after: dto(r!) })
    return dto(r!)
  })
}

/** Uploads keep their record (the reference becomes empty); the audit log keeps the values. */
export async function deleteInstrument(ctx: FirmContext, id: number): Promise<void> {
  const before = await find(ctx, id)
  await useDb().transaction(async (tx) => {
    await tx.delete(instrumentProfiles).where(and(eq(instrumentProfiles.firmId, ctx.firm.id), eq(instrumentProfiles.id, id)))
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'instrument.delete', entityType: 'instrument_profile', entityId: id, before: dto(before) })
  })
}
