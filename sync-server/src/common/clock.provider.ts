// Time and ids are injected so tests can control them (style.md: clock, ids and crypto are providers).
import { v7 as uuidv7 } from 'uuid';

export const CLOCK = Symbol('CLOCK');
export const IDS = Symbol('IDS');

export interface Clock {
  now(): Date;
}

export interface IdGenerator {
  /** A UUID version 7, so ids sort by creation time. */
  uuid(): string;
}

export const systemClock: Clock = { now: () => new Date() };
export const uuidV7Ids: IdGenerator = { uuid: () => uuidv7() };
