import { Router, type ErrorRequestHandler, type Request, type RequestHandler, type Response } from 'express';
import { renderMessagePage } from '../../review/layout.js';
import { decideReviewAccess, type ReviewDenial } from '../../security/review-access.js';
import { logInternalError, type Logger } from '../../log/logger.js';
import { jsonErrorHandler, toAppError } from '../error-handler.js';
import { AppError } from '../errors.js';
import { requestState } from '../request-context.js';
import { route } from '../respond.js';
import { reviewHeaders } from '../review-headers.js';
import { advisoryApiHandler, listApiHandler, summaryApiHandler } from './review-api.js';
import type { ReviewRouteDeps } from './review-deps.js';
import { advisoryPageHandler, listPageHandler, summaryPageHandler, type PageHandler } from './review-pages.js';

/**
 * Everything under /review: the pages, their JSON, their access rule and their headers. Mounted
 * outside /cds-services authentication: review access is decided here (review-access.ts). Every
 * response, errors included, carries the review headers; pages answer errors as pages, the API as
 * catalogue JSON.
 */

type Scope = 'staff' | 'advisory';

function sendPage(res: Response, status: number, html: string): void {
  if (res.headersSent) {
    return;
  }
  res.status(status).type('html').send(html);
}

/** What a refused reader is told: plain words, nothing about the token beyond "expired". */
function refusalText(reason: ReviewDenial): string {
  if (reason === 'link-expired') {
    return 'This review link has expired. Open the advisory through the hospital sign-in, or from a newer card.';
  }
  if (reason.startsWith('link-')) {
    return 'This review link is not valid for this advisory. Open it through the hospital sign-in, or from the card itself.';
  }
  return 'The review pages open only through the hospital sign-in. Please use the link your hospital provides.';
}

function guard(deps: ReviewRouteDeps, name: string, scope: Scope, surface: 'page' | 'api'): RequestHandler {
  return (req, res, next) => {
    const state = requestState(res);
    state.route = name;
    const token = req.query['token'];
    const decision = decideReviewAccess(
      deps.access,
      {
        peerAddress: req.socket.remoteAddress,
        rawHeaders: req.rawHeaders,
        ...(typeof token === 'string' ? { token } : {}),
        ...(scope === 'advisory' ? { cardUuid: String(req.params['cardUuid'] ?? '') } : {}),
      },
      deps.clock().getTime(),
    );
    if (decision.kind === 'allowed') {
      state.detail = { kind: 'review', via: decision.via, reviewer: decision.reviewer };
      next();
      return;
    }
    state.detail = { kind: 'review', refused: decision.reason };
    if (surface === 'api') {
      throw new AppError('CDS_ERR_REVIEW_ACCESS_DENIED');
    }
    state.errorCode = 'CDS_ERR_REVIEW_ACCESS_DENIED';
    sendPage(res, 403, renderMessagePage({ title: 'Sign-in needed', timeZone: deps.policy.site.timeZone, message: refusalText(decision.reason) }));
  };
}

function page(handler: PageHandler): RequestHandler {
  return async (req: Request, res: Response) => {
    const result = await handler(req);
    sendPage(res, result.status, result.html);
  };
}

/** Pages answer a failure as a short page carrying only the request id; the detail goes to the log. */
function pageErrorHandler(deps: ReviewRouteDeps, logger: Logger): ErrorRequestHandler {
  const json = jsonErrorHandler(logger);
  return (error: unknown, req, res, next) => {
    if (req.path.startsWith('/api/') || req.path === '/api') {
      json(error, req, res, next);
      return;
    }
    const state = requestState(res);
    const known = toAppError(error);
    if (known === undefined) {
      logInternalError(logger, state.requestId, error);
    }
    state.errorCode = known?.code ?? 'CDS_ERR_INTERNAL';
    const status = known?.status ?? 500;
    sendPage(
      res,
      status,
      renderMessagePage({
        title: status === 404 ? 'Not found' : 'Something went wrong',
        timeZone: deps.policy.site.timeZone,
        message: status === 404 ? 'There is no review page at this address.' : `The page could not be shown. If this goes on, quote request id ${state.requestId} to the service operator.`,
      }),
    );
  };
}

export function reviewRouter(deps: ReviewRouteDeps, logger: Logger): Router {
  const router = Router();
  router.use(reviewHeaders);
  router.get('/', guard(deps, 'review-list', 'staff', 'page'), page(listPageHandler(deps)));
  router.get('/summary', guard(deps, 'review-summary', 'staff', 'page'), page(summaryPageHandler(deps)));
  router.get('/advisories/:cardUuid', guard(deps, 'review-advisory', 'advisory', 'page'), page(advisoryPageHandler(deps)));
  router.get('/api/advisories', guard(deps, 'review-api-list', 'staff', 'api'), route('review-api-list', listApiHandler(deps)));
  router.get('/api/advisories/:cardUuid', guard(deps, 'review-api-advisory', 'advisory', 'api'), route('review-api-advisory', advisoryApiHandler(deps)));
  router.get('/api/summary', guard(deps, 'review-api-summary', 'staff', 'api'), route('review-api-summary', summaryApiHandler(deps)));
  router.use(() => {
    throw new AppError('CDS_ERR_NOT_FOUND');
  });
  router.use(pageErrorHandler(deps, logger));
  return router;
}
