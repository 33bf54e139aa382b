// The project of the current page, loaded once by the project shell and shared with its tabs.
export interface ProjectView {
  id: number
  name: string
  description: string
  crs: string
  crsName: string
  units: 'm' | 'ft' | 'usft'
  angleFormat: 'dms' | 'gon'
  precisionUnit: 'mm' | 'hundredth_ft'
  status: 'collecting' | 'adjusted' | 'signed' | 'released'
  toleranceProfileId: number | null
  geoidSeparationM: number
  refractionK: number
  refractionSigmaK: number
  projectHeightM: number | null
  createdAt: string
  updatedAt: string
  counts?: { stations: number; observations: number; runs: number }
}

export function useProject() {
  const route = useRoute()
  const project = useState<ProjectView | null>(`project-${route.params.firm}-${route.params.project}`, () => null)
  const apiBase = computed(() => `/api/firms/${route.params.firm}/projects/${route.params.project}`)
  const pageBase = computed(() => `/f/${route.params.firm}/projects/${route.params.project}`)
  async function refresh() {
    project.value = await useRequestFetch()(apiBase.value) as ProjectView
    return project.value
  }
  return { project, refresh, apiBase, pageBase }
}
