/** What the fake layout sends: an MQTT publish on a topic relative to `blockbell/v1/<layout>/`. */
export interface Publish {
  topic: string
  payload: string
  retain: boolean
  /** Simulation time (ms since start) at which it happened. */
  at: number
}

/** One line of the fake layout's log. */
export interface LogLine {
  at: number
  text: string
}

export interface StepResult {
  publishes: Publish[]
  log: LogLine[]
}

/** Collects the publishes and log lines of one step, in order. */
export class Output implements StepResult {
  publishes: Publish[] = []
  log: LogLine[] = []

  publish(at: number, topic: string, payload: string, retain = false): void {
    this.publishes.push({ topic, payload, retain, at })
  }

  say(at: number, text: string): void {
    this.log.push({ at, text })
  }
}
