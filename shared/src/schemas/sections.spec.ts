import { describe, expect, it } from 'vitest';
import { validateFields, validateRecord, type FieldError } from './registry';
import { placement } from './test-ids.fixture';

function errors(result: { ok: true } | { ok: false; errors: FieldError[] }): FieldError[] {
  return result.ok ? [] : result.errors;
}

describe('numbers in every section', () => {
  it('refuse NaN and infinities with a message naming the field', () => {
    for (const value of [NaN, Infinity, -Infinity]) {
      expect(
        errors(validateFields('amblyoscopeAngles', { objectiveHorizontalDeg: value })),
      ).toEqual([
        { field: 'objectiveHorizontalDeg', message: 'Objective horizontal angle must be a number' },
      ]);
      expect(errors(validateFields('nearPointConvergence', { breakCm: value }))[0]?.message).toBe(
        'Near point of convergence, break must be a number',
      );
    }
  });

  it('refuse a number written as text', () => {
    expect(errors(validateFields('amblyoscopeSetup', { interpupillaryDistanceMm: '62' }))).toEqual([
      { field: 'interpupillaryDistanceMm', message: 'Interpupillary distance must be a number' },
    ]);
  });
});

describe('amblyoscope sections', () => {
  it('accept a full setup', () => {
    const result = validateRecord('amblyoscopeSetup', {
      ...placement,
      interpupillaryDistanceMm: 58,
      ownCorrectionWorn: true,
      extraLensesRight: '+3.00 DS',
      extraLensesLeft: null,
      fixingEye: 'right',
      lockedTube: 'left',
      dialsZeroed: true,
      skippedReason: null,
    });
    expect(result.ok).toBe(true);
  });

  it('keep the interpupillary distance between 40 and 80 mm', () => {
    expect(validateFields('amblyoscopeSetup', { interpupillaryDistanceMm: 40 }).ok).toBe(true);
    expect(validateFields('amblyoscopeSetup', { interpupillaryDistanceMm: 80 }).ok).toBe(true);
    expect(errors(validateFields('amblyoscopeSetup', { interpupillaryDistanceMm: 39.5 }))).toEqual([
      {
        field: 'interpupillaryDistanceMm',
        message: 'Interpupillary distance must be between 40 and 80 mm',
      },
    ]);
  });

  it('refuse a choice outside its list, naming the choices in words', () => {
    expect(errors(validateFields('amblyoscopeSetup', { fixingEye: 'both' }))).toEqual([
      {
        field: 'fixingEye',
        message: 'Fixing eye must be one of: Right eye, Left eye, Alternating',
      },
    ]);
    expect(errors(validateFields('simultaneousPerception', { result: 'yes' }))[0]?.message).toBe(
      'Simultaneous perception must be one of: Present, Absent, Not tested',
    );
  });

  it('refuse a yes-or-no given as text', () => {
    expect(errors(validateFields('fusion', { rightMarkSeen: 'yes' }))).toEqual([
      { field: 'rightMarkSeen', message: 'Right control mark seen must be yes or no' },
    ]);
  });

  it('keep angles within their scales, signed', () => {
    expect(
      validateFields('amblyoscopeAngles', {
        subjectiveHorizontalDeg: -90,
        objectiveHorizontalDeg: 90,
        subjectiveVerticalPd: -50,
        objectiveTorsionDeg: 45,
      }).ok,
    ).toBe(true);
    expect(
      errors(
        validateFields('amblyoscopeAngles', {
          subjectiveHorizontalDeg: -90.5,
          objectiveVerticalPd: 51,
          subjectiveTorsionDeg: -46,
        }),
      ),
    ).toEqual([
      {
        field: 'subjectiveHorizontalDeg',
        message: 'Subjective horizontal angle must be between −90° and +90°',
      },
      {
        field: 'objectiveVerticalPd',
        message: 'Objective vertical angle must be between −50Δ and +50Δ',
      },
      {
        field: 'subjectiveTorsionDeg',
        message: 'Subjective torsion must be between −45° and +45°',
      },
    ]);
  });

  it('accept scotoma extents and refuse one off the scale', () => {
    expect(
      validateFields('suppressionScotoma', {
        deviatingEye: 'left',
        horizontalLostConvergentDeg: 4,
        horizontalLostDivergentDeg: -12,
        verticalLostUpperDeg: 3,
        verticalLostLowerDeg: -2,
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('suppressionScotoma', { verticalLostUpperDeg: 60 }))).toEqual([
      {
        field: 'verticalLostUpperDeg',
        message: 'Picture lost, upper must be between −45° and +45°',
      },
    ]);
  });

  it('keep fusional range positions as separate fields with the norms table named', () => {
    expect(
      validateFields('fusionalRanges', {
        divergenceBreakDeg: -4,
        divergenceRecoveryDeg: -2,
        convergenceBreakDeg: 28,
        convergenceRecoveryDeg: 20,
        rightUpBreakPd: 3,
        leftUpRecoveryPd: 2,
        incycloBreakDeg: -10,
        excycloBreakDeg: 12,
        normsTable: 'fuselight-amblyoscope-v1',
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('fusionalRanges', { normsTable: '' }))[0]?.message).toBe(
      'Norms table cannot be empty',
    );
  });

  it('accept gross stereopsis trials and refuse a trial marked right when the answer was wrong', () => {
    expect(
      validateFields('grossStereopsis', {
        trials: [
          { presented: 'toward', answer: 'toward', correct: true },
          { presented: 'away', answer: 'toward', correct: false },
        ],
      }).ok,
    ).toBe(true);
    expect(
      errors(
        validateFields('grossStereopsis', {
          trials: [
            { presented: 'toward', answer: 'toward', correct: true },
            { presented: 'away', answer: 'toward', correct: true },
          ],
        }),
      ),
    ).toEqual([
      {
        field: 'trials.1.correct',
        message: 'Trial answered correctly must say whether the answer matched the picture shown',
      },
    ]);
    expect(
      errors(
        validateFields('grossStereopsis', {
          trials: [{ presented: 'left', answer: 'toward', correct: false }],
        }),
      )[0],
    ).toEqual({
      field: 'trials.0.presented',
      message: 'Trial picture shown must be one of: Toward the patient, Away from the patient',
    });
  });

  it('accept a skipped section with its reason and refuse an empty reason', () => {
    expect(
      validateRecord('fusionalRanges', { ...placement, skippedReason: 'not tested: patient tired' })
        .ok,
    ).toBe(true);
    expect(errors(validateFields('fusion', { skippedReason: '  ' }))).toEqual([
      { field: 'skippedReason', message: 'Reason not done cannot be empty' },
    ]);
  });
});

describe('acuity, cover tests and near vision', () => {
  it('keep logMAR between −0.5 and 3.0 and store the notation beside it', () => {
    expect(
      validateFields('visualAcuity', {
        rightDistanceCorrectedLogMar: 0.18,
        rightDistanceCorrectedNotation: '6/9',
        leftNearPinholeLogMar: -0.3,
        leftDistanceUncorrectedNotation: 'CF',
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('visualAcuity', { leftDistanceCorrectedLogMar: 3.1 }))).toEqual([
      {
        field: 'leftDistanceCorrectedLogMar',
        message: 'Left distance acuity, corrected must be between −0.5 and 3.0 logMAR',
      },
    ]);
  });

  it('record a cover test deviation by its horizontal and vertical parts', () => {
    expect(
      validateFields('coverTest', {
        nearFinding: 'tropia',
        nearHorizontalDirection: 'exo',
        nearVerticalDirection: 'hyper',
        nearEye: 'left',
        nearControl: 'fair',
        distanceFinding: 'orthophoria',
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('coverTest', { distanceHorizontalDirection: 'hyper' }))).toEqual([
      {
        field: 'distanceHorizontalDirection',
        message: 'Distance horizontal direction must be one of: Eso, Exo',
      },
    ]);
  });

  it('keep prism cover test sizes between 0 and 100 Δ with the base direction apart', () => {
    expect(
      validateFields('prismCoverTest', {
        nearHorizontalPd: 25,
        nearHorizontalBase: 'in',
        distanceVerticalPd: 4,
        distanceVerticalBase: 'down',
        distanceVerticalEye: 'right',
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('prismCoverTest', { nearHorizontalPd: 120 }))[0]?.message).toBe(
      'Near horizontal prism must be between 0Δ and 100Δ',
    );
    expect(errors(validateFields('prismCoverTest', { nearHorizontalBase: 'up' }))[0]?.field).toBe(
      'nearHorizontalBase',
    );
  });

  it('keep near point, accommodation and stereoacuity in range', () => {
    expect(validateFields('nearPointConvergence', { breakCm: 6, recoveryCm: 9 }).ok).toBe(true);
    expect(errors(validateFields('nearPointConvergence', { recoveryCm: -1 }))[0]?.message).toBe(
      'Near point of convergence, recovery must be between 0 and 100 cm',
    );
    expect(
      validateFields('accommodation', { rightNearPointCm: 8, binocularAmplitudeD: 12.5 }).ok,
    ).toBe(true);
    expect(errors(validateFields('accommodation', { leftAmplitudeD: 31 }))[0]?.message).toBe(
      'Left amplitude of accommodation must be between 0 and 30 D',
    );
    expect(
      validateFields('stereoacuity', {
        valueArcsec: 60,
        testUsed: 'Random-dot book',
        testDistanceCm: 40,
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('stereoacuity', { valueArcsec: 0 }))[0]?.message).toBe(
      'Stereoacuity must be between 1″ and 10000″',
    );
  });
});

describe('motility and plan', () => {
  it('take whole grades from −4 to +4 in each position of gaze', () => {
    expect(validateFields('motility', { rightUpRight: -2, leftDownLeft: 4, rightLeft: 0 }).ok).toBe(
      true,
    );
    expect(errors(validateFields('motility', { leftUpLeft: 1.5, rightDown: -5 }))).toEqual([
      {
        field: 'leftUpLeft',
        message: 'Left eye, up and left must be a whole number between −4 and +4',
      },
      {
        field: 'rightDown',
        message: 'Right eye, down must be a whole number between −4 and +4',
      },
    ]);
  });

  it('accept a plan and refuse an unknown or repeated management choice', () => {
    expect(
      validateFields('plan', {
        impression: 'Intermittent exotropia, well controlled at near',
        management: ['exercises', 'review'],
        exercisesPrescribed: ['Pen push-ups, 5 minutes twice a day'],
        followUpWeeks: 6,
      }).ok,
    ).toBe(true);
    expect(errors(validateFields('plan', { management: ['surgery'] }))[0]).toEqual({
      field: 'management.0',
      message:
        'Management must be chosen from: Exercises, Glasses, Occlusion, Prisms, Referral, Review, Discharge',
    });
    expect(errors(validateFields('plan', { management: ['review', 'review'] }))[0]?.message).toBe(
      'Management lists each choice once',
    );
    expect(errors(validateFields('plan', { followUpWeeks: 2.5 }))[0]?.message).toBe(
      'Follow-up interval must be a whole number between 0 and 104 weeks',
    );
  });
});

describe('attachment and letter', () => {
  const attachment = {
    ...placement,
    caption: 'Head posture, photo',
    mimeType: 'image/jpeg',
    byteSize: 482133,
    sha256: 'a'.repeat(64),
    storageKey: 'site/visit/photo-1.jpg',
    uploadedAt: '2026-12-01T09:40:00.000Z',
  };

  it('accept attachment metadata and refuse a bad hash, type or size', () => {
    expect(validateRecord('attachment', attachment).ok).toBe(true);
    expect(
      errors(
        validateRecord('attachment', {
          ...attachment,
          sha256: 'A'.repeat(64),
          mimeType: 'jpeg',
          byteSize: 0,
        }),
      ).map((error) => error.message),
    ).toEqual([
      'File type must be a media type like image/jpeg',
      'File size must be a whole number between 1 and 26214400 bytes',
      'SHA-256 must be 64 lowercase hexadecimal characters',
    ]);
  });

  it('accept a draft referrer letter and refuse a bad recipient address', () => {
    const letter = {
      ...placement,
      kind: 'referrer',
      status: 'draft',
      subject: 'Orthoptic assessment',
      recipientEmail: 'k.mensah@example.org',
      deliveryState: 'notSent',
    };
    expect(validateRecord('letter', letter).ok).toBe(true);
    expect(errors(validateFields('letter', { recipientEmail: 'mensah' }))).toEqual([
      { field: 'recipientEmail', message: 'Recipient e-mail must be an e-mail address' },
    ]);
    expect(errors(validateFields('letter', { kind: 'memo' }))[0]?.field).toBe('kind');
  });
});
