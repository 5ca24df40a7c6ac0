// Keeps one panel's failure (a record the panel cannot read, a missing provider) to that panel:
// the Sections, the interpretation and signing stay usable, and the panel says what went wrong.
import { Component, type ReactNode } from 'react';

interface PanelBoundaryProps {
  title: string;
  children: ReactNode;
}

export class PanelBoundary extends Component<PanelBoundaryProps, { error: Error | null }> {
  override state: { error: Error | null } = { error: null };

  static getDerivedStateFromError(error: unknown): { error: Error } {
    return { error: error instanceof Error ? error : new Error(String(error)) };
  }

  override render(): ReactNode {
    const { error } = this.state;
    if (!error) return this.props.children;
    return (
      <section className="flc-panel" aria-label={this.props.title}>
        <h2>{this.props.title}</h2>
        <p className="flc-message flc-message--error" role="alert">
          This part of the visit could not be shown ({error.message}). The rest of the visit is
          unaffected.
        </p>
      </section>
    );
  }
}
