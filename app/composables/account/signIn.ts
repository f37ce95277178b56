/** Signs in with e-mail and password; the answer names the page the role lands on. */
export function signIn(email: string, password: string) {
  return $fetch<{ landing: string }>('/api/auth/login', { method: 'POST', body: { email, password } })
}
