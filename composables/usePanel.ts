import type { LayoutArea } from '#shared/schemas/layout'
import type { OverrideMode } from '#shared/signalling/types'
import type { Verdict, PanelUser } from '#shared/live/rights'
import { forceTurnoutVerdict, interposeVerdict, signalVerdict, turnoutVerdict } from '#shared/live/rights'
import type { TurnoutLeg } from '#shared/signalling/values'
import { roleAtLeast } from '#shared/utils/roles'

const NOT_LIVE = 'Not connected: controls wait until the panel is live again.'
const NO_WORD_YET = 'No word from the server: controls wait until it answers again.'

/**
 * The Panel's glue between the live store, the signed-in person and the controls: what they may work
 * (and why not), and the commands they send.
 */
export function usePanel() {
  const live = useLiveStore()
  const { user: sessionUser } = useUserSession()
  const user = computed<PanelUser | null>(() => sessionUser.value ? { id: sessionUser.value.id, name: sessionUser.value.name, role: sessionUser.value.role } : null)
  const def = computed(() => live.view.definition)
  const isLive = computed(() => live.connection === 'live')
  const isSignaller = computed(() => !!user.value && roleAtLeast(user.value.role, 'signaller'))

  function gate(v: Verdict): Verdict {
    if (v.allowed && !isLive.value) return { allowed: false, area: v.area, reason: live.connection === 'stale' ? NO_WORD_YET : NOT_LIVE }
    return v
  }

  const none: Verdict = { allowed: false, area: null, reason: 'The layout is not loaded yet.' }
  const forSignal = (id: string) => def.value ? gate(signalVerdict(user.value, def.value, live.view.areas, id)) : none
  const forTurnout = (id: string) => def.value ? gate(turnoutVerdict(user.value, def.value, live.view.areas, id)) : none
  const forBerth = (id: string) => def.value ? gate(interposeVerdict(user.value, def.value, live.view.areas, id)) : none

  const setOverride = (signal: string, mode: OverrideMode) =>
    live.send({ action: 'set-override', signal, mode, revision: live.view.state.signalRevisions[signal] ?? 0 })

  const throwTurnout = (turnout: string, position: TurnoutLeg) =>
    live.send({ action: 'set-turnout', turnout, position, revision: live.view.state.turnoutRevisions[turnout] ?? 0 })
  const forceTurnout = (turnout: string, position: TurnoutLeg) =>
    live.send({ action: 'force-turnout', turnout, position, revision: live.view.state.turnoutRevisions[turnout] ?? 0 })
  const forForce = (id: string) => def.value ? gate(forceTurnoutVerdict(user.value, def.value, id)) : none

  const interpose = (block: string, description: string) => live.send({ action: 'interpose', block, description })
  const acknowledge = (alarm: string) => live.send({ action: 'acknowledge', alarm })
  const takeArea = (a: LayoutArea) => live.send({ action: 'take-area', area: a.id })
  const releaseArea = (a: LayoutArea) => live.send({ action: 'release-area', area: a.id })
  const forceRelease = (a: LayoutArea) => live.send({ action: 'force-release', area: a.id })
  const handOver = (a: LayoutArea, to: number) => live.send({ action: 'hand-over', area: a.id, to })
  const acceptHandOver = (area: string) => live.send({ action: 'accept-hand-over', area })
  const declineHandOver = (area: string) => live.send({ action: 'decline-hand-over', area })

  return {
    live, user, def, isLive, isSignaller,
    forSignal, forTurnout, forBerth, forForce,
    setOverride, throwTurnout, forceTurnout, interpose, acknowledge, takeArea, releaseArea, forceRelease, handOver, acceptHandOver, declineHandOver,
  }
}
