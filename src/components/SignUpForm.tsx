import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { signUpSchema } from '../lib/accounts.schemas';
import { postJson } from './api-client';
import { useHydrated } from './useHydrated';

type Input = z.input<typeof signUpSchema>;
type Output = z.output<typeof signUpSchema>;

export default function SignUpForm() {
  const hydrated = useHydrated();
  const { register, handleSubmit, setError, formState, watch } = useForm<Input, unknown, Output>({
    resolver: zodResolver(signUpSchema),
    defaultValues: { managesLand: false },
  });
  const { errors, isSubmitting } = formState;
  const managesLand = watch('managesLand');

  const onSubmit = handleSubmit(async (input) => {
    const result = await postJson('/api/sign-up', input);
    if (result.ok) {
      window.location.assign(`/sign-in/check-email?email=${encodeURIComponent(input.email)}&new=1`);
      return;
    }
    const field = result.error.field;
    setError(field === 'email' || field === 'name' || field === 'claimedLand' || field === 'signUpNote' ? field : 'root', { message: result.error.message });
  });

  return (
    <form method="post" onSubmit={onSubmit} noValidate className="space-y-4" data-hydrated={hydrated ? 'true' : undefined}>
      <div>
        <label htmlFor="name" className="field-label">Your name</label>
        <input id="name" autoComplete="name" className="field-input" aria-invalid={errors.name ? 'true' : 'false'} {...register('name')} />
        {errors.name && <p role="alert" className="field-error">{errors.name.message}</p>}
      </div>
      <div>
        <label htmlFor="email" className="field-label">E-mail address</label>
        <input id="email" type="email" autoComplete="email" inputMode="email" className="field-input" placeholder="name@example.org" aria-invalid={errors.email ? 'true' : 'false'} {...register('email')} />
        {errors.email && <p role="alert" className="field-error">{errors.email.message}</p>}
        {errors.email?.message?.startsWith('An account already') && <p className="mt-1 text-sm"><a href="/sign-in">Sign in</a></p>}
      </div>
      <label className="flex items-start gap-3 rounded-md border border-loam-200 bg-lichen-50 p-3 text-sm">
        <input type="checkbox" className="mt-1 h-4 w-4 accent-moss-600" {...register('managesLand')} />
        <span>
          <span className="font-semibold">I own or manage land</span> and want to put parcels on the register.
          An admin verifies landowners before they can grant permits; until then you can draft parcels.
        </span>
      </label>
      {managesLand && (
        <div className="space-y-4 rounded-md border border-loam-200 p-3">
          <p className="text-sm text-loam-700">Both optional: they help the admin who verifies you.</p>
          <div>
            <label htmlFor="claimedLand" className="field-label">The land you own or manage</label>
            <input id="claimedLand" className="field-input" placeholder="Its name and where it is, such as Alder Farm, 60 acres off Route 12" aria-invalid={errors.claimedLand ? 'true' : 'false'} {...register('claimedLand')} />
            {errors.claimedLand && <p role="alert" className="field-error">{errors.claimedLand.message}</p>}
          </div>
          <div>
            <label htmlFor="signUpNote" className="field-label">A note for the admin</label>
            <textarea id="signUpNote" rows={3} className="field-input" placeholder="How the admin can confirm that you manage it" aria-invalid={errors.signUpNote ? 'true' : 'false'} {...register('signUpNote')} />
            {errors.signUpNote && <p role="alert" className="field-error">{errors.signUpNote.message}</p>}
          </div>
        </div>
      )}
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button w-full" disabled={isSubmitting}>
        {isSubmitting ? 'Creating…' : 'Create account and e-mail me a link'}
      </button>
    </form>
  );
}
