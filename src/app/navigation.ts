import type { Access } from '#shared/schemas/roles';

export type NavItem = {
  to: string;
  label: string;
  /** One line for the overview card. */
  summary: string;
  access: Access;
};

/**
 * Every area that exists, with who may open it. Navigation, overview cards and route guards all read
 * this list, so a role never sees a link to a page it would be refused. Areas join the list when they
 * are built, not before.
 */
export const NAV_ITEMS: readonly NavItem[] = [
  { to: '/', label: 'Overview', summary: 'Your account and the state of the system.', access: 'signed-in' },
  {
    to: '/station',
    label: 'Station',
    summary: 'Scan a unit, watch it calibrate, read the verdict and print its traveler.',
    access: ['operator'],
  },
  {
    to: '/units',
    label: 'Units',
    summary: 'Look a unit up by serial: its calibrations, offset, travelers and hold.',
    access: 'signed-in',
  },
  {
    to: '/recipes',
    label: 'Recipes',
    summary: 'Models and their recipe versions: copy, edit, compare, submit for review and release.',
    access: { only: ['engineer'] },
  },
  {
    to: '/work-orders',
    label: 'Work orders',
    summary: 'Import a work order from CSV: all rows or none, with each problem named.',
    access: { only: ['engineer', 'quality'] },
  },
  {
    to: '/analysis',
    label: 'Line statistics',
    summary: 'Distributions, capability, control charts with run rules, lot and station comparisons.',
    // Not in an administrator's menu (their menu holds the admin areas); the screen still opens for them.
    access: { only: ['engineer', 'quality'] },
  },
  {
    to: '/quality',
    label: 'Quality',
    summary: 'Units on hold, containment search with bulk hold and release, returns investigations.',
    access: { only: ['engineer', 'quality'] },
  },
  {
    to: '/qualification',
    label: 'Qualification',
    summary: 'Whether each station may calibrate: reference-unit readings, bias over time, locks.',
    access: { only: ['engineer', 'quality'] },
  },
  {
    to: '/admin/people',
    label: 'People',
    summary: 'Accounts, roles, badges and PINs; switch access off, reset passwords, unlock.',
    access: ['admin'],
  },
  {
    to: '/admin/outbox',
    label: 'Outbox',
    summary: 'Every e-mail Phasewright has sent: invitations and password links.',
    access: ['admin'],
  },
  {
    to: '/admin/audit',
    label: 'Audit log',
    summary: 'Who changed what, when and why, with the values before and after.',
    access: ['admin'],
  },
  {
    to: '/admin/system',
    label: 'System',
    summary: 'Database and job queue health, and the running version.',
    access: ['admin'],
  },
  {
    to: '/admin/stations',
    label: 'Stations',
    summary: 'Calibration stations, the models they may measure, and their keys.',
    access: ['admin'],
  },
  {
    to: '/admin/jobs',
    label: 'Failed jobs',
    summary: 'Background jobs that failed after their retries; read the error and replay.',
    access: ['admin'],
  },
];
