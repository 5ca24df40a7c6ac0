import { fieldMeta } from '@fuselight/shared';
import { ChoiceGroup, EyeChoice, YesNoChoice } from '../../../components/controls';
import { useBenchSection } from '../../../data/bench';
import { BenchNumberField, BenchTextField } from '../BenchFields';
import { StepFrame } from '../StepFrame';

const meta = fieldMeta.amblyoscopeSetup;

export function SetupStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'amblyoscopeSetup');
  const { fields, save, saveState } = section;
  const errorFor = (name: string) =>
    saveState.state === 'error' && saveState.field === name ? saveState.message : null;
  return (
    <StepFrame
      title="Setup"
      section={section}
      instructions={
        <p>
          Set the instrument to the patient before any slide: interpupillary distance, their own
          correction, any extra lenses in the holders, the fixing eye and the locked tube, and every
          dial at zero.
        </p>
      }
    >
      <div className="fl-bench-grid">
        <BenchNumberField
          meta={meta.interpupillaryDistanceMm}
          value={fields.interpupillaryDistanceMm}
          error={errorFor('interpupillaryDistanceMm')}
          onSave={(value) => void save({ interpupillaryDistanceMm: value })}
        />
        <YesNoChoice
          label={meta.ownCorrectionWorn.label}
          value={fields.ownCorrectionWorn ?? null}
          onChange={(value) => void save({ ownCorrectionWorn: value })}
        />
        <BenchTextField
          label={meta.extraLensesRight.label}
          value={fields.extraLensesRight}
          error={errorFor('extraLensesRight')}
          onSave={(value) => void save({ extraLensesRight: value })}
        />
        <BenchTextField
          label={meta.extraLensesLeft.label}
          value={fields.extraLensesLeft}
          error={errorFor('extraLensesLeft')}
          onSave={(value) => void save({ extraLensesLeft: value })}
        />
        <EyeChoice<'right' | 'left' | 'alternating'>
          label={meta.fixingEye.label}
          allowAlternating
          value={fields.fixingEye ?? null}
          onChange={(value) => void save({ fixingEye: value })}
        />
        <ChoiceGroup
          label={meta.lockedTube.label}
          options={[
            { value: 'right', label: 'Right tube' },
            { value: 'left', label: 'Left tube' },
            { value: 'none', label: 'Neither' },
          ]}
          value={fields.lockedTube ?? null}
          onChange={(value) => void save({ lockedTube: value })}
        />
        <YesNoChoice
          label={meta.dialsZeroed.label}
          value={fields.dialsZeroed ?? null}
          onChange={(value) => void save({ dialsZeroed: value })}
        />
      </div>
    </StepFrame>
  );
}
