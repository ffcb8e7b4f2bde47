// Global setup for vitest. Filled in by the foundation: when TEST_DATABASE_URL is set it prepares a
// template database with every migration applied; pure unit tests need nothing from it.
export default async function setup(): Promise<void> {}
