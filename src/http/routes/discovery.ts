import { discoveryResponse } from '../../cds/services.js';
import type { RouteHandler } from '../respond.js';

/** `GET /cds-services` (CDS Hooks 2.0 §Discovery): the catalogue from src/cds, as it is. */
export const discoveryHandler: RouteHandler = () => ({ status: 200, body: discoveryResponse() });
