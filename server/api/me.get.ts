export default defineEventHandler((event) => {
  const u = requireUser(event)
  return { id: u.id, email: u.email, name: u.name, role: u.role, customerId: u.customerId, customerName: u.customerName }
})
