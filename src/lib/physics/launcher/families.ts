// The launcher families and drag laws by name: a module of its own so forms and schemas in the
// browser can list them without loading the models.
export const LAUNCHER_FAMILIES = ['gas-work', 'valve-flow'] as const;
export const DRAG_LAWS = ['constant', 'sphere'] as const;
export type LauncherFamily = (typeof LAUNCHER_FAMILIES)[number];
export type DragLaw = (typeof DRAG_LAWS)[number];
