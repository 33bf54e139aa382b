// Compile-time contract between the services and the pages: each DTO a
// service builds must be assignable to the shape shared/types/project-dtos.ts
// gives the pages, so the type check (vue-tsc) fails when one drifts.
// Nothing here runs.
import type * as Page from '../../shared/types/project-dtos'
import type { AccessDto } from './access'
import type { AuditEntryDto, listAudit } from './audit-log'
import type { ObservationSetDto } from './observations'
import type { ReleaseDto } from './releases'
import type { SignoffDto, SignoffPreview } from './signoffs'

type Fits<A extends B, B> = [A, B]

export type DtoContract = [
  Fits<SignoffDto, Page.SignoffDto>,
  Fits<SignoffPreview, Page.SignoffPreviewDto>,
  Fits<ReleaseDto, Page.ReleaseDto>,
  Fits<AccessDto, Page.AccessDto>,
  Fits<ObservationSetDto, Page.ObservationSetListDto>,
  Fits<AuditEntryDto, Page.AuditEntryDto>,
  Fits<Awaited<ReturnType<typeof listAudit>>, Page.AuditPageDto>,
]
