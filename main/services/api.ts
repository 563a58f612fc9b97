// The service API as seen from main/: the schemas live in core/services/api.ts (pure zod) so that
// the renderer can validate replies with the very same declarations; this module re-exports them.
export * from '../../core/services/api';
