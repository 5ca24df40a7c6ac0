import { useVisitBundle } from '../../../data/charting';
import { benchFields } from '../../../data/bench';
import { bsvGradesOf, CLINICAL_CAUTION } from '@fuselight/shared';
import { Caution } from '../StepFrame';

/** The BSV hierarchy check at the point of entry: says so when a grade sits on an absent one. */
export function BsvCheck({
  visitId,
  overrides,
}: {
  visitId: string;
  overrides?: {
    simultaneousPerception?: object;
    fusion?: object;
    grossStereopsis?: object;
  };
}) {
  const bundle = useVisitBundle(visitId).data;
  const { problems } = bsvGradesOf({
    simultaneousPerception: {
      ...benchFields(bundle, 'simultaneousPerception'),
      ...overrides?.simultaneousPerception,
    },
    fusion: { ...benchFields(bundle, 'fusion'), ...overrides?.fusion },
    grossStereopsis: { ...benchFields(bundle, 'grossStereopsis'), ...overrides?.grossStereopsis },
  });
  if (problems.length === 0) return null;
  return (
    <div className="fl-bench-warning" role="alert">
      <strong>BSV grades disagree.</strong>
      <ul>
        {problems.map((p) => (
          <li key={`${p.lowerGrade}-${p.higherGrade}`}>{p.message}</li>
        ))}
      </ul>
      <Caution text={CLINICAL_CAUTION} />
    </div>
  );
}
