/** Addresses of a fit's region view and of the fit with a region highlighted. */
export function regionPath(studyId: string, fitId: string, region: string): string {
  return `/studies/${studyId}/fits/${fitId}/regions/${encodeURIComponent(region)}`;
}

export function fitPathWithRegion(studyId: string, fitId: string, region: string): string {
  return `/studies/${studyId}/fits/${fitId}?region=${encodeURIComponent(region)}`;
}
