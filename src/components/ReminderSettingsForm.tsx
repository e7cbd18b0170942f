import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { ReminderKind } from '../lib/reminders';
import { reminderSettingsSchema, type ReminderSettingsInput } from '../lib/reminders.schemas';
import { sendJson } from './api-client';
import { useHydrated } from './useHydrated';

/** What each switch is called on the page, and what it sends. */
export const reminderLabels: Record<ReminderKind, { label: string; help: string }> = {
  permitEnding: { label: 'A permit ends in 14 days', help: 'Your own permits, and your club’s when you steward it.' },
  seasonOpening: { label: 'A season opens tomorrow', help: 'On parcels your permits (or your club’s) let you use that day.' },
  closureStarting: { label: 'A closure starts tomorrow', help: 'When a landowner shuts a parcel you may use.' },
  weeklyDigest: { label: 'Each Monday, a digest of my land’s week', help: 'Entries, flags and access requests on your parcels in the last 7 days; only when there were any.' },
};

/**
 * The reminder e-mails' switches: one checkbox per kind that applies to the person, saved with the
 * same schema the endpoint reads; kinds not shown keep their value. Says so when they are saved.
 */
export default function ReminderSettingsForm({ settings, kinds }: { settings: ReminderSettingsInput; kinds: ReminderKind[] }) {
  const hydrated = useHydrated();
  const [saved, setSaved] = useState(false);
  const { register, handleSubmit, setError, formState } = useForm<ReminderSettingsInput>({ resolver: zodResolver(reminderSettingsSchema), defaultValues: settings });
  const { errors, isSubmitting } = formState;

  const onSubmit = handleSubmit(async (input) => {
    setSaved(false);
    const result = await sendJson('PUT', '/api/me/reminders', input);
    if (result.ok) return setSaved(true);
    const field = kinds.find((k) => k === result.error.field) ?? 'root';
    setError(field, { message: result.error.message });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4" data-hydrated={hydrated ? 'true' : undefined} data-testid="reminder-settings">
      <fieldset className="space-y-3">
        <legend className="field-label">E-mail me when</legend>
        {kinds.map((kind) => (
          <div key={kind}>
            <label className="flex items-start gap-2 text-sm font-medium">
              <input
                type="checkbox"
                className="mt-0.5 h-4 w-4 shrink-0 accent-moss-600"
                aria-describedby={`reminder-${kind}-help`}
                aria-invalid={errors[kind] ? 'true' : 'false'}
                {...register(kind, { onChange: () => setSaved(false) })}
              />
              {reminderLabels[kind].label}
            </label>
            <p id={`reminder-${kind}-help`} className="ml-6 text-sm text-loam-700">{reminderLabels[kind].help}</p>
            {errors[kind] && <p role="alert" className="field-error ml-6">{errors[kind]?.message}</p>}
          </div>
        ))}
      </fieldset>
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <div className="flex flex-wrap items-center gap-3">
        <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : 'Save reminders'}</button>
        {saved && <p role="status" className="text-sm font-medium text-moss-800" data-testid="reminders-saved">Saved. Reminders go out as you chose from now on.</p>}
      </div>
    </form>
  );
}
