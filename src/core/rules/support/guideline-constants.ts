/**
 * Guideline values that the policy file format (version 1) has no key for yet. They are kept here,
 * in one place, with their source, until the policy schema gains keys for them.
 */

/**
 * Cluster headache: high-flow oxygen at 12–15 L/min through a non-rebreathing reservoir mask, given
 * without hypoxaemia (BTS 2017 and BTS home oxygen guidance, as quoted secondarily: check-values 1c, V2).
 */
export const CLUSTER_HEADACHE_FLOW_L_PER_MIN = { min: 12, max: 15 } as const;

/**
 * Pneumothorax admitted for observation without drainage: reservoir mask at 15 L/min, aiming for
 * 100 % (BTS 2017 Table 2, recommendations F5–F6; check-values 1c, V).
 */
export const PNEUMOTHORAX_FLOW_L_PER_MIN = 15;
