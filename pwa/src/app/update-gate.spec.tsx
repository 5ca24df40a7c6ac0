// The app update is put in place only at a moment when no field is being typed: focus in no text
// input, text area or editable element, and no form holding unsaved edits (react-hook-form's
// isDirty, a Section value not yet written).
import { cleanup, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { useForm } from 'react-hook-form';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { UnsavedEdits, useUnsavedEdits } from './unsaved-edits';
import { applyUpdateWhenSafe, isSafeMomentToUpdate, isTypingTarget } from './update-gate';

afterEach(() => {
  cleanup();
  document.body.innerHTML = '';
});

/** Lets the zero-timeout checks after a focus change run. */
const settle = () => new Promise((resolve) => setTimeout(resolve, 10));

function field(html: string): HTMLElement {
  const holder = document.createElement('div');
  holder.innerHTML = html;
  document.body.append(holder);
  return holder.firstElementChild as HTMLElement;
}

describe('the moment an app update may be put in place', () => {
  it('is now when nothing is focused and no form holds unsaved edits', () => {
    const unsaved = new UnsavedEdits();
    const apply = vi.fn();
    const pending = applyUpdateWhenSafe(apply, { unsaved });
    expect(apply).toHaveBeenCalledTimes(1);
    expect(pending.waiting).toBe(false);
  });

  it('waits while a text field has focus, also when focus moves to the next field, and comes when it is left', async () => {
    const unsaved = new UnsavedEdits();
    const first = field('<input type="text" aria-label="Given name" />');
    const second = field('<input type="number" aria-label="Near point" />');
    const button = field('<button type="button">Save</button>');
    first.focus();
    const apply = vi.fn();
    const pending = applyUpdateWhenSafe(apply, { unsaved });
    expect(apply).not.toHaveBeenCalled();
    expect(pending.waiting).toBe(true);

    second.focus();
    await settle();
    expect(apply).not.toHaveBeenCalled();

    button.focus();
    await settle();
    expect(apply).toHaveBeenCalledTimes(1);
    expect(pending.waiting).toBe(false);
    // Once applied, nothing applies it again.
    first.focus();
    button.focus();
    await settle();
    expect(apply).toHaveBeenCalledTimes(1);
  });

  it('counts text inputs, text areas and editable elements as typing, and not buttons, boxes or selects', () => {
    const typing = [
      '<input aria-label="a" />',
      '<input type="search" aria-label="b" />',
      '<input type="date" aria-label="c" />',
      '<textarea aria-label="d"></textarea>',
      '<div contenteditable="true" aria-label="e"></div>',
    ];
    const notTyping = [
      '<button type="button">f</button>',
      '<input type="checkbox" aria-label="g" />',
      '<input type="radio" aria-label="h" />',
      '<select aria-label="i"><option>j</option></select>',
      '<div contenteditable="false" aria-label="k"></div>',
    ];
    for (const html of typing) expect([html, isTypingTarget(field(html))]).toEqual([html, true]);
    for (const html of notTyping) {
      expect([html, isTypingTarget(field(html))]).toEqual([html, false]);
    }
    expect(isTypingTarget(null)).toBe(false);
  });

  it('waits while any form holds unsaved edits, with no field focused', async () => {
    const unsaved = new UnsavedEdits();
    const releaseA = unsaved.hold();
    const releaseB = unsaved.hold();
    const apply = vi.fn();
    applyUpdateWhenSafe(apply, { unsaved });
    releaseA();
    releaseA(); // lifting a mark twice lifts it once
    await settle();
    expect(apply).not.toHaveBeenCalled();
    expect(isSafeMomentToUpdate(document, unsaved)).toBe(false);
    releaseB();
    await settle();
    expect(apply).toHaveBeenCalledTimes(1);
  });

  it('a cancelled wait never applies', async () => {
    const unsaved = new UnsavedEdits();
    const release = unsaved.hold();
    const apply = vi.fn();
    const pending = applyUpdateWhenSafe(apply, { unsaved, intervalMs: 5 });
    pending.cancel();
    release();
    await settle();
    expect(apply).not.toHaveBeenCalled();
    expect(pending.waiting).toBe(false);
  });

  it('waits for a react-hook-form form changed and not saved, after its field was left', async () => {
    const unsaved = new UnsavedEdits();
    function ClinicNumberForm() {
      const {
        register,
        handleSubmit,
        reset,
        formState: { isDirty },
      } = useForm({ defaultValues: { clinicNumber: 'FL-000123' } });
      useUnsavedEdits(isDirty, unsaved);
      return (
        <form onSubmit={(event) => void handleSubmit((values) => reset(values))(event)}>
          <label htmlFor="clinic-number">Clinic number</label>
          <input id="clinic-number" {...register('clinicNumber')} />
          <button type="submit">Save</button>
        </form>
      );
    }
    render(<ClinicNumberForm />);
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('Clinic number'), '4');
    const apply = vi.fn();
    applyUpdateWhenSafe(apply, { unsaved });
    expect(apply).not.toHaveBeenCalled();

    // Leaving the field is not enough: the change is still only on screen.
    await user.tab();
    expect(document.activeElement?.textContent).toBe('Save');
    await settle();
    expect(apply).not.toHaveBeenCalled();

    await user.click(screen.getByRole('button', { name: 'Save' }));
    await settle();
    expect(apply).toHaveBeenCalledTimes(1);
    expect(screen.getByLabelText<HTMLInputElement>('Clinic number').value).toBe('FL-0001234');
  });
});
