import { formatFlow } from '../assessment/format.js';
import type { StepDown } from './step-down.js';

/**
 * A planned step down in words for a card, and the suggestion's label. Pure.
 * Shared by the titration-review rules, so the step reads the same on every card that offers it.
 */
export function describeStep(step: StepDown): {
  readonly advice: string;
  readonly label: string | undefined;
  /** A few words for a summary: "consider 4 → 3 L/min". */
  readonly headline: string;
} {
  switch (step.kind) {
    case 'lower-flow':
      return {
        advice: `Consider lowering the flow from ${formatFlow(step.fromFlowLPerMin)} to ${formatFlow(step.change.flowLPerMin)} and rechecking SpO2`,
        label: `Lower the flow to ${formatFlow(step.change.flowLPerMin)}`,
        headline: `consider ${formatFlow(step.fromFlowLPerMin)} → ${formatFlow(step.change.flowLPerMin)}`,
      };
    case 'stop':
      return {
        advice: `Consider stopping the oxygen (now ${step.from}) and checking SpO2 on air`,
        label: 'Stop the oxygen; check SpO2 on air',
        headline: 'consider stopping the oxygen',
      };
    case 'none':
      if (step.withinPrescription !== undefined) {
        const { fromFlowLPerMin, flowLPerMin } = step.withinPrescription;
        return {
          advice: `Consider lowering the flow from ${formatFlow(fromFlowLPerMin)} to ${formatFlow(flowLPerMin)} if the prescribed flow range allows it (the prescription then need not change), and rechecking SpO2`,
          label: undefined,
          headline: `consider ${formatFlow(fromFlowLPerMin)} → ${formatFlow(flowLPerMin)} if the prescribed range allows`,
        };
      }
      return {
        advice:
          step.bedside === undefined
            ? `Consider lowering the oxygen by one step (no one-click change: ${step.blockedBy})`
            : `${step.bedside} (no one-click change: ${step.blockedBy})`,
        label: undefined,
        headline: 'consider a step down',
      };
  }
}
