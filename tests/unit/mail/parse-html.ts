import { Window } from 'happy-dom'

/** Parses markup as a browser would (happy-dom), to check what elements a message really contains. */
export function parseHTML(markup: string): Document {
  const window = new Window()
  window.document.write(markup)
  return window.document as unknown as Document
}
