/** Brings a view into sight (native platforms: nothing; the web build scrolls, see scroll-into-view.web.ts). */
export function scrollIntoView(_view: unknown): void {}
