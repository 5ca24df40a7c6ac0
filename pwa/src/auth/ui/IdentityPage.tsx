import { createContext, useContext, type ReactNode } from 'react';
import './identity.css';

export interface IdentityFrameProps {
  title: string;
  children: ReactNode;
}

/**
 * The frame of an identity screen without Ionic: a title bar and a scrolling column. The
 * signed-out shell (sign-in, PIN unlock, enrolment) draws its screens in it before Ionic is
 * loaded; the signed-in app puts an Ionic page in its place (IdentityFrameContext), because
 * Ionic's router outlet animates pages.
 */
export function PlainIdentityFrame({ title, children }: IdentityFrameProps) {
  return (
    <div className="fl-id-frame">
      <header className="fl-id-toolbar">
        <div className="fl-id-toolbar-title">{title}</div>
      </header>
      <div className="fl-id-scroll">{children}</div>
    </div>
  );
}

/** Draws an identity screen's frame: PlainIdentityFrame unless the signed-in app gives its own. */
export const IdentityFrameContext = createContext<(props: IdentityFrameProps) => ReactNode>(
  (props) => <PlainIdentityFrame {...props} />,
);

/** The frame of an identity screen: a toolbar title and one centred column. */
export function IdentityPage({
  title,
  wide = false,
  children,
}: {
  title: string;
  wide?: boolean;
  children: ReactNode;
}) {
  const frame = useContext(IdentityFrameContext);
  return frame({
    title,
    children: (
      <main className={`fl-id-page${wide ? ' fl-id-wide' : ''}`}>
        <h1>{title}</h1>
        {children}
      </main>
    ),
  });
}
