// An AngleControl that holds its own value, as a screen would: for specs that press its buttons
// and keys and read what it reports.
import { useState } from 'react';
import { AngleControl, type AngleControlProps } from './AngleControl';

export type StatefulAngleControlProps = Partial<AngleControlProps> & { initial?: number | null };

export function StatefulAngleControl({
  initial = null,
  onChange,
  ...props
}: StatefulAngleControlProps) {
  const [value, setValue] = useState<number | null>(initial);
  return (
    <AngleControl
      label="Objective horizontal angle"
      axis="horizontal"
      unit="deg"
      min={-90}
      max={90}
      {...props}
      value={value}
      onChange={(next) => {
        setValue(next);
        onChange?.(next);
      }}
    />
  );
}
