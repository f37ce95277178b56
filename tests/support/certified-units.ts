// Tested, shipped and certified units of the demo tripler for certificate tests (see fixtures/tested-shipment.ts).
export { HOLD, TRIPLER, testedShipment, type CertifiedSet } from '../../fixtures/tested-shipment'
