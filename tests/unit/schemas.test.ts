// The request bodies of members, invitations, password reset, profile and
// tokens: good bodies pass, bad ones name the field that is wrong.
import { describe, expect, it } from 'vitest'
import {
  invitationAcceptSchema, invitationCreateSchema, memberUpdateSchema, passwordResetConfirmSchema, passwordResetRequestSchema,
} from '../../shared/schemas/members'
import { passwordChangeSchema, profileUpdateSchema } from '../../shared/schemas/profile'
import { tokenCreateSchema } from '../../shared/schemas/tokens'
import type { z } from 'zod'

function badFields(schema: z.ZodType, body: unknown): string[] {
  const r = schema.safeParse(body)
  if (r.success) return []
  return r.error.issues.map((i) => i.path.join('.') || `(${i.code})`)
}

describe('invitations', () => {
  it('accepts an address and role, normalising the address', () => {
    const r = invitationCreateSchema.parse({ email: '  New.Person@Example.TEST ', role: 'field_crew' })
    expect(r).toEqual({ email: 'new.person@example.test', role: 'field_crew' })
  })
  it('names each bad field', () => {
    expect(badFields(invitationCreateSchema, { email: 'not an address', role: 'field_crew' })).toEqual(['email'])
    expect(badFields(invitationCreateSchema, { email: 'a@b.test', role: 'admiral' })).toEqual(['role'])
    expect(badFields(invitationCreateSchema, {})).toEqual(['email', 'role'])
    expect(badFields(invitationCreateSchema, { email: `${'x'.repeat(250)}@b.test`, role: 'client' })).toEqual(['email'])
  })
  it('says "is required" for a missing field', () => {
    const r = invitationCreateSchema.safeParse({ email: 'a@b.test' })
    expect(r.success).toBe(false)
    expect(r.error!.issues[0]!.message).toBe('is required')
  })
  it('refuses unknown keys', () => {
    expect(badFields(invitationCreateSchema, { email: 'a@b.test', role: 'client', admin: true })).toEqual(['(unrecognized_keys)'])
  })
  it('accept: password at least 10 characters and at most 72 bytes (bcrypt reads 72)', () => {
    expect(badFields(invitationAcceptSchema, { name: 'A', password: '123456789' })).toEqual(['password'])
    expect(badFields(invitationAcceptSchema, { name: 'A', password: '1234567890' })).toEqual([])
    expect(badFields(invitationAcceptSchema, { password: 'x'.repeat(72) })).toEqual([])
    // 25 three-byte characters are 75 bytes.
    expect(badFields(invitationAcceptSchema, { password: '€'.repeat(25) })).toEqual(['password'])
    expect(badFields(invitationAcceptSchema, { name: '   ', password: '1234567890' })).toEqual(['name'])
  })
})

describe('members', () => {
  it('role must be one of the five roles', () => {
    expect(badFields(memberUpdateSchema, { role: 'owner' })).toEqual([])
    expect(badFields(memberUpdateSchema, { role: 'OWNER' })).toEqual(['role'])
    expect(badFields(memberUpdateSchema, { role: 3 })).toEqual(['role'])
  })
})

describe('password reset', () => {
  it('request needs an e-mail address', () => {
    expect(badFields(passwordResetRequestSchema, { email: 'someone@tiepoint.test' })).toEqual([])
    expect(badFields(passwordResetRequestSchema, { email: '' })).toEqual(['email'])
  })
  it('confirm needs the token and a long enough password', () => {
    expect(badFields(passwordResetConfirmSchema, { token: 'tpr_x', password: 'short' })).toEqual(['password'])
    expect(badFields(passwordResetConfirmSchema, { password: 'long enough password' })).toEqual(['token'])
    expect(badFields(passwordResetConfirmSchema, { token: 'x'.repeat(201), password: 'long enough password' })).toEqual(['token'])
  })
})

describe('profile and tokens', () => {
  it('empty licence fields become null (no licence)', () => {
    expect(profileUpdateSchema.parse({ licenceNumber: '  ', licenceJurisdiction: '' })).toEqual({ licenceNumber: null, licenceJurisdiction: null })
  })
  it('names over-long profile fields', () => {
    expect(badFields(profileUpdateSchema, { name: 'n'.repeat(121) })).toEqual(['name'])
    expect(badFields(profileUpdateSchema, { licenceNumber: 'n'.repeat(61) })).toEqual(['licenceNumber'])
    expect(badFields(profileUpdateSchema, { licenceJurisdiction: 'n'.repeat(121) })).toEqual(['licenceJurisdiction'])
  })
  it('password change names current and next', () => {
    expect(badFields(passwordChangeSchema, { current: '', next: 'short' })).toEqual(['current', 'next'])
  })
  it('token name is required and at most 80 characters', () => {
    expect(badFields(tokenCreateSchema, { name: 'Field laptop' })).toEqual([])
    expect(badFields(tokenCreateSchema, { name: '' })).toEqual(['name'])
    expect(badFields(tokenCreateSchema, { name: 't'.repeat(81) })).toEqual(['name'])
  })
})
