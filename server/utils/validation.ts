import type { H3Event } from 'h3'
import type { z } from 'zod'

/** One readable sentence for a failed validation, naming the field: "email: Enter an e-mail address". */
export function describeIssues(error: z.ZodError): { message: string, issues: { path: string, message: string }[] } {
  const issues = error.issues.map(issue => ({ path: issue.path.map(String).join('.') || '(body)', message: issue.message }))
  return { message: issues.map(i => `${i.path}: ${i.message}`).join('; '), issues }
}

function badRequest(error: z.ZodError): never {
  const { message, issues } = describeIssues(error)
  throw createError({ statusCode: 400, statusMessage: 'Bad Request', message, data: { issues } })
}

/** Reads and validates a JSON body; 400 naming the field on failure (never a 500). */
export async function parseBody<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.infer<S>> {
  const result = await readValidatedBody(event, body => schema.safeParse(body ?? {}))
  if (!result.success) badRequest(result.error)
  return result.data
}

/** Validates route parameters; 400 naming the parameter on failure. */
export async function parseParams<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.infer<S>> {
  const result = await getValidatedRouterParams(event, params => schema.safeParse(params))
  if (!result.success) badRequest(result.error)
  return result.data
}

/** Validates the query string; 400 naming the parameter on failure. */
export async function parseQuery<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.infer<S>> {
  const result = await getValidatedQuery(event, query => schema.safeParse(query))
  if (!result.success) badRequest(result.error)
  return result.data
}
