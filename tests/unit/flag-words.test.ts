import { describe, expect, it } from 'vitest';
import { flagTallyLine, flagTitleWord, memberNoteMail } from '../../src/lib/flag-words';

/* The words of a follow-up e-mail to the forager whose entry was flagged. Figures worked by hand. */

describe('flagTallyLine', () => {
  it('given 1.2 kg counted on a 1 kg day limit, it says 0.2 kg over', () => {
    expect(flagTallyLine({ scope: 'day', state: 'over', used: '1.2', limit: '1', unit: 'kg', percent: 120 })).toBe('0.2 kg over the limit of 1 kg a day (1.2 kg counted)');
  });
  it('given a tally nearing its limit, it says where it stood, with the state word and symbol', () => {
    expect(flagTallyLine({ scope: 'season', state: 'nearing', used: '8.5', limit: '10', unit: 'kg', percent: 85 })).toBe('8.5 kg of 10 kg a season (85 %), ◑ nearing');
  });
  it('given a count one over, the unit follows the amount in the singular', () => {
    expect(flagTallyLine({ scope: 'visit', state: 'over', used: '13', limit: '12', unit: 'fruiting-body', percent: 108.3 })).toBe('1 fruiting body over the limit of 12 fruiting bodies a visit (13 fruiting bodies counted)');
  });
});

describe('memberNoteMail', () => {
  const facts = {
    kind: 'breach' as const, parcelName: 'Cobble Ridge Lot', species: 'Chaga', countedOn: '2026-12-02', quantities: [{ quantity: '700', unit: 'g' }],
    authorName: 'Walter Pelletier', author: 'the landowner',
    tallies: [{ scope: 'day', state: 'over', used: '700', limit: '500', unit: 'g', percent: 140 }, { scope: 'season', state: 'within', used: '700', limit: '1.5', unit: 'kg', percent: 46.7 }],
  };
  it('given a breach, it names the species, parcel and the parcel-local day, quotes the note and says only how much over', () => {
    const mail = memberNoteMail(facts, 'Please keep to 500 g a day.');
    expect(mail.heading).toBe('A note about your Chaga entry on Cobble Ridge Lot');
    expect(mail.paragraphs[0]).toBe('Walter Pelletier, the landowner, wrote about your entry of 700 g of Chaga on Cobble Ridge Lot, counted on Dec 2, 2026 (flagged: breach):');
    expect(mail.paragraphs[1]).toBe('"Please keep to 500 g a day."');
    expect(mail.paragraphs[2]).toBe('How much over: 200 g over the limit of 500 g a day (700 g counted).');
  });
  it('given a nearing flag, it says where the tallies stood instead', () => {
    const mail = memberNoteMail({ ...facts, kind: 'nearing', tallies: [{ scope: 'day', state: 'nearing', used: '450', limit: '500', unit: 'g', percent: 90 }] }, 'Nearly at the day limit.');
    expect(mail.paragraphs[2]).toBe('Where it stood: 450 g of 500 g a day (90 %), ◑ nearing.');
  });
});

describe('flagTitleWord', () => {
  it('given a nearing flag whose worst tally is reached, the title says "Reached", not "Nearing"', () => {
    expect(flagTitleWord('nearing', 'reached')).toBe('Reached');
  });
  it('given a nearing flag whose worst tally is only nearing, the title says "Nearing"', () => {
    expect(flagTitleWord('nearing', 'nearing')).toBe('Nearing');
  });
  it('given a breach or a flag raised on sync, the title says how it came about', () => {
    expect(flagTitleWord('breach', 'over')).toBe('Breach');
    expect(flagTitleWord('over-on-sync', 'over')).toBe('Over on sync');
    expect(flagTitleWord('off-permit', 'within')).toBe('Off permit');
  });
});
