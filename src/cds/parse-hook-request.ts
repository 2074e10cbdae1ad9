import {
  describeIssues,
  OrderSelectRequestSchema,
  OrderSignRequestSchema,
  PatientViewRequestSchema,
  type CdsRequest,
  type Issue,
} from './schemas.js';
import type { HookName } from '../core/types.js';
import { findService, type CdsServiceDefinition } from './services.js';

/**
 * One place that decides whether a service call body is usable, for the http layer and the CLI
 * alike: unknown service id (404), a hook this id does not serve (400), or issues with dot paths (400), or a request ready for
 * `evaluateHook`. Pure.
 */
export type HookRequestParse =
  | { readonly kind: 'ok'; readonly service: CdsServiceDefinition; readonly request: CdsRequest }
  | { readonly kind: 'unknown-service' }
  | { readonly kind: 'unsupported-hook'; readonly supportedHooks: readonly string[] }
  | { readonly kind: 'invalid'; readonly issues: readonly Issue[] };

export function parseHookRequest(serviceId: string, body: unknown): HookRequestParse {
  const service = findService(serviceId);
  if (service === undefined) {
    return { kind: 'unknown-service' };
  }
  const hook = typeof body === 'object' && body !== null ? (body as { hook?: unknown }).hook : undefined;
  if (typeof hook === 'string' && hook !== service.hook) {
    // CDS Hooks 2.0: one id may serve several hooks; ours serve one each, so any other is a 400.
    return { kind: 'unsupported-hook', supportedHooks: [service.hook] };
  }
  const schema =
    service.hook === 'order-select'
      ? OrderSelectRequestSchema
      : service.hook === 'patient-view'
        ? PatientViewRequestSchema
        : OrderSignRequestSchema;
  const parsed = schema.safeParse(body);
  if (!parsed.success) {
    return { kind: 'invalid', issues: describeIssues(parsed.error) };
  }
  VALIDATED_CONTEXTS.set(parsed.data.context, service.hook);
  return { kind: 'ok', service, request: parsed.data };
}

/**
 * The contexts this parse has validated against their hook's schema: zod builds each as a new
 * object, so one found here is exactly what the schema passed and `evaluateHook` need not check it
 * again. Weakly held: an entry goes when its request does.
 */
const VALIDATED_CONTEXTS = new WeakMap<object, HookName>();

/** True when `context` is one that `parseHookRequest` built and validated as the context of `hook`. */
export function isValidatedContext(context: unknown, hook: HookName): boolean {
  return typeof context === 'object' && context !== null && VALIDATED_CONTEXTS.get(context) === hook;
}
