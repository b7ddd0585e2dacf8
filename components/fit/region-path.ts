/** Addresses of a fit's region view and of the fit with a region highlighted (typed routes). */
import type { Href } from "expo-router";

export function regionPath(studyId: string, fitId: string, region: string): Href {
  return {
    pathname: "/studies/[studyId]/fits/[fitId]/regions/[region]",
    params: { studyId, fitId, region },
  };
}

/** The fit with `region` highlighted in its table (`?region=`). */
export function fitPathWithRegion(studyId: string, fitId: string, region: string): Href {
  return { pathname: "/studies/[studyId]/fits/[fitId]", params: { studyId, fitId, region } };
}
