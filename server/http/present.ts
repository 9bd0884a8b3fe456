// How rows leave the server: only the fields a client may see (never hashes).
import type { Response } from 'express';
import type { PublicUser } from '../../shared/report/api';
import type { User } from '../db/models';

export type { PublicUser };

export function publicUser(u: User): PublicUser {
  return { id: u.id, email: u.email, name: u.name, isAdmin: u.isAdmin, active: !u.deactivatedAt };
}

/** Lower-cased, trimmed e-mail: addresses are compared without case. */
export function normalEmail(email: string): string {
  return email.trim().toLowerCase();
}

/**
 * What a presenter may hand over for a response of type T (shared/report/api.ts): the same shape,
 * with a Date wherever T has an ISO string, since res.json turns Dates into exactly those.
 */
export type Sent<T> = T extends string
  ? T | Date
  : T extends readonly (infer U)[]
    ? Sent<U>[]
    : T extends object
      ? { [K in keyof T]: Sent<T[K]> }
      : T;

/** res.json with the body checked against the API's response type, so server and web client agree. */
export function send<T>(res: Response, body: Sent<T>): void {
  res.json(body);
}

/** JSON text of a value of type T, made where the value was (a worker thread), sent as it is. */
export type JsonText<T> = string & { readonly __json: T };

export function jsonText<T>(body: Sent<T>): JsonText<T> {
  return JSON.stringify(body) as JsonText<T>;
}

/** Sends JSON text made by jsonText: the request thread neither copies the objects nor serialises them. */
export function sendText<T>(res: Response, text: JsonText<T>): void {
  // The headers res.type().send() sets for such a body (no ETag: app.ts), set directly: send would
  // parse and rewrite the content type and copy the text (a history page: tens of KiB) into a
  // Buffer; Node writes the string as it is (and no body for HEAD).
  res.setHeader('Content-Type', 'application/json; charset=utf-8');
  res.setHeader('Content-Length', Buffer.byteLength(text));
  res.end(text);
}
