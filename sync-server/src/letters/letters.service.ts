// Letters on the server: the PDF as the mailer sends it, for a caller in the letter's site scope.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, NotFoundException } from '@nestjs/common';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { assertSiteAccess } from '../auth/scope';
import { letterFonts } from './letter-fonts';
import { renderLetterPdf } from '@fuselight/shared/letter-pdf';
import { LetterSourceService } from './letter-source.service';
import { RecordAccess } from './record-access';

@Injectable()
export class LettersService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(RecordAccess) private readonly records: RecordAccess,
    @Inject(LetterSourceService) private readonly source: LetterSourceService,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  async pdfFor(user: AuthUser, letterId: string): Promise<Uint8Array> {
    const letter = await this.records.get('letter', letterId);
    // Out of scope reads the same as absent, after the role check (403 for an admin).
    if (!letter) throw new NotFoundException(`letter ${letterId} was not found`);
    try {
      assertSiteAccess(user, letter.siteId);
    } catch (error) {
      if (user.role === 'admin') throw error;
      throw new NotFoundException(`letter ${letterId} was not found`);
    }
    const { layout } = await this.source.load(letterId);
    const bytes = await renderLetterPdf(layout, letterFonts());
    await this.em.fork().transactional((em) =>
      this.audit.record(em, {
        kind: 'letter.pdf_read',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: letter.siteId,
        subjectType: 'letter',
        subjectId: letterId,
      }),
    );
    return bytes;
  }
}

/** A file name for the letter's PDF: no patient name, only the clinic number and the date. */
export function letterFileName(clinicNumber: string, date: string, kind: string): string {
  const safe = clinicNumber.replace(/[^A-Za-z0-9-]+/g, '-');
  return `${kind === 'handout' ? 'handout' : 'letter'}-${safe}-${date}.pdf`;
}
