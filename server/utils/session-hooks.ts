/**
 * Called once when an operating session ends (after it is stored as ended). The session summary e-mail is
 * sent from here; until that is built it does nothing. Must never throw into the caller.
 */
export function onSessionEnded(_sessionId: number): void {
  // The e-mail summary (sendSessionSummary) is called here.
}
