// Public physics API of Shotwright (see shared/design/physics.md). Pure TypeScript: no I/O,
// no framework, no database, no clock. Server routes, the browser and the tests import from here.
