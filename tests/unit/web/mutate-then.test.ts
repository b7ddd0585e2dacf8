/**
 * A navigation that follows a mutation must run even when the mutation's cache updates unmount
 * the screen that started it (a restored study leaves the Recently deleted list before the
 * study's page can open). The observer stands for the screen's `useMutation`; unsubscribing it
 * is what unmounting does.
 */
import { MutationObserver, QueryClient } from "@tanstack/react-query";
import { describe, expect, it } from "vitest";
import { mutateThen } from "../../../hooks/mutate-then";

function screenMutation(mutationFn: (n: number) => Promise<number>) {
  const observer = new MutationObserver<number, Error, number>(new QueryClient(), { mutationFn });
  const unmount = observer.subscribe(() => undefined);
  return { observer, unmount, mutateAsync: (n: number) => observer.mutate(n) };
}

const later = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
const doubledLater = async (n: number) => {
  await later(5);
  return n * 2;
};

describe("what follows a mutation", () => {
  it("is dropped when handed to mutate and the screen unmounts first — why mutateThen exists", async () => {
    const screen = screenMutation(doubledLater);
    let followed = false;
    screen.observer
      .mutate(2, {
        onSuccess: () => {
          followed = true;
        },
      })
      .catch(() => undefined);
    screen.unmount();
    await later(20);
    expect(followed).toBe(false);
  });

  it("runs with the mutation's answer even after the screen unmounted", async () => {
    const screen = screenMutation(doubledLater);
    const answers: number[] = [];
    mutateThen(screen, 2, (answer) => answers.push(answer));
    screen.unmount();
    await later(20);
    expect(answers).toEqual([4]);
  });

  it("does not run when the mutation fails, and the failure stays on the mutation", async () => {
    const screen = screenMutation(async () => {
      throw new Error("This study can no longer be restored.");
    });
    const answers: number[] = [];
    mutateThen(screen, 2, (answer) => answers.push(answer));
    await later(20);
    expect(answers).toEqual([]);
    expect(screen.observer.getCurrentResult().error?.message).toBe(
      "This study can no longer be restored.",
    );
  });
});
