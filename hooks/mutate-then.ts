import type { UseMutationResult } from "@tanstack/react-query";

/**
 * Runs a mutation, then `next` with its answer — even when the cache updates the mutation makes
 * unmount the component that started it. A callback handed to `mutate` is dropped once its
 * component unmounts, and that happens here: a restored study leaves the Recently deleted list, a
 * deleted or left study's own screen turns to "not found", an accepted invitation is no longer
 * open, a restored set-aside's form goes with it, each before the navigation or the parent's
 * callback that should follow could run. A failure stays on the mutation's `error`, where the
 * screen shows it.
 */
export function mutateThen<TData, TVariables>(
  mutation: Pick<UseMutationResult<TData, Error, TVariables>, "mutateAsync">,
  variables: TVariables,
  next: (data: TData) => unknown,
): void {
  mutation.mutateAsync(variables).then(next, () => undefined);
}
