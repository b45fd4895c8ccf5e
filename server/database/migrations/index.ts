import * as initial from './0001-initial'
import * as devicesAndEventKeys from './0002-devices-and-event-keys'
import * as endingSessions from './0003-ending-sessions'
import * as mailInvitationsResets from './0005-mail-invitations-resets'
import * as operatingSessionReview from './0006-operating-session-review'
import * as layoutEditing from './0007-layout-editing'
import * as trackCleaning from './0010-track-cleaning'
import * as layoutOwners from './0011-layout-owners'
import * as blockTallies from './0012-block-tallies'
import * as uploads from './0013-uploads'
import * as stockTasksDigests from './0014-stock-tasks-digests'
import * as sessionLayoutVersion from './0015-session-layout-version'
import * as sessionTrainSteps from './0016-session-train-steps'

/**
 * Every migration, in order. Listed by hand (not globbed) so the same list works under tsx and inside the
 * Nitro bundle. To add one: create `NNNN-what-it-does.ts` exporting `up` and `down`, then add it here.
 */
export const migrations = [
  { name: '0001-initial', ...initial },
  { name: '0002-devices-and-event-keys', ...devicesAndEventKeys },
  { name: '0003-ending-sessions', ...endingSessions },
  { name: '0005-mail-invitations-resets', ...mailInvitationsResets },
  { name: '0006-operating-session-review', ...operatingSessionReview },
  { name: '0007-layout-editing', ...layoutEditing },
  { name: '0010-track-cleaning', ...trackCleaning },
  { name: '0011-layout-owners', ...layoutOwners },
  { name: '0012-block-tallies', ...blockTallies },
  { name: '0013-uploads', ...uploads },
  { name: '0014-stock-tasks-digests', ...stockTasksDigests },
  { name: '0015-session-layout-version', ...sessionLayoutVersion },
  { name: '0016-session-train-steps', ...sessionTrainSteps },
]
