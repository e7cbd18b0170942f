import type { Actor } from './actor';
import { mayEver, type Action } from './permissions';

export type NavItem = { href: string; label: string; action: Action };

/** Page titles from GLOSSARY.md, in the order a person reaches for them. */
export const navigation: NavItem[] = [
  { href: '/field', label: 'Field', action: 'field:check-in' },
  { href: '/my-permits', label: 'My permits', action: 'permit:request' },
  { href: '/ledger', label: 'My ledger', action: 'ledger:read-own' },
  { href: '/land', label: 'Land', action: 'parcel:list-own' },
  { href: '/requests', label: 'Requests', action: 'parcel:list-own' },
  { href: '/club', label: 'Club', action: 'club:join' },
  { href: '/catalogue', label: 'Catalogue', action: 'catalogue:read' },
  { href: '/accounts', label: 'Accounts', action: 'account:list' },
  { href: '/settings', label: 'Settings', action: 'reminders:edit-own' },
];

export function navigationFor(actor: Actor | null): NavItem[] {
  return navigation.filter((item) => mayEver(actor, item.action));
}
