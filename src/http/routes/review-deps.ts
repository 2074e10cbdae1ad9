import type { Policy } from '../../core/policy.js';
import type { ReasonDisplay } from '../../review/override-reasons.js';
import type { ReviewAccessConfig } from '../../security/review-access.js';
import type { Store } from '../../store/store.js';

/** What the /review routes need: the store to read, the access settings, the site zone and reasons. */
export interface ReviewRouteDeps {
  readonly store: Store;
  readonly access: ReviewAccessConfig;
  readonly policy: Policy;
  readonly reasonDisplay: ReasonDisplay;
  readonly clock: () => Date;
}
