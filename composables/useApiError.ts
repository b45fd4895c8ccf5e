/** A field-by-field view of an API error: `fields.email` holds the message for that field. */
export interface ApiErrorView {
  message: string
  fields: Record<string, string>
}

interface FetchErrorLike { data?: { message?: string, data?: { issues?: { path: string, message: string }[] } }, message?: string }

export function toApiError(error: unknown): ApiErrorView {
  const e = error as FetchErrorLike
  const fields: Record<string, string> = {}
  for (const issue of e.data?.data?.issues ?? []) fields[issue.path] ??= issue.message
  return { message: e.data?.message ?? e.message ?? 'Something went wrong', fields }
}
