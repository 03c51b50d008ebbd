// Public physics API of Shotwright (see shared/design/physics.md). Pure TypeScript: no I/O,
// no framework, no database, no clock. Server routes, the browser and the tests import from here.
export * from './errors';
export * from './units';
export * from './random';
export * from './air';
export * from './drag';
export * from './internal';
export * from './roots';
export * from './flight/driver';
export { dragFactor, STANDARD_GRAVITY_MPS2 } from './flight/model';
export * from './solve';
export * from './stats/speed';
export * from './stats/cep';
export * from './stats/group';
export * from './stats/student-t';
export * from './stats/trend';
export * from './fit/least-squares';
export * from './launcher';
export * from './chance';
