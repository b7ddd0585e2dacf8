/**
 * Brings a view into sight when it is not already: on the web a view is an
 * element, scrolled to the top of its scrolling parent.
 */
export function scrollIntoView(view: unknown): void {
  const element = view as HTMLElement | null;
  if (!element || typeof element.getBoundingClientRect !== "function") return;
  const box = element.getBoundingClientRect();
  if (box.top >= 0 && box.top < window.innerHeight * 0.6) return;
  element.scrollIntoView({ block: "start", behavior: "smooth" });
}
