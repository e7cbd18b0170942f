import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { signUpSchema } from '../lib/accounts.schemas';
import { postJson } from './api-client';

type Input = z.input<typeof signUpSchema>;
type Output = z.output<typeof signUpSchema>;

export default function SignUpForm() {
  const { register, handleSubmit, setError, formState } = useForm<Input, unknown, Output>({
    resolver: zodResolver(signUpSchema),
    defaultValues: { managesLand: false },
  });
  const { errors, isSubmitting } = formState;

  const onSubmit = handleSubmit(async (input) => {
    const result = await postJson('/api/sign-up', input);
    if (result.ok) {
      window.location.assign(`/sign-in/check-email?email=${encodeURIComponent(input.email)}&new=1`);
      return;
    }
    const field = result.error.field;
    setError(field === 'email' || field === 'name' ? field : 'root', { message: result.error.message });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4" data-hydrated="true">
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
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button w-full" disabled={isSubmitting}>
        {isSubmitting ? 'Creating…' : 'Create account and e-mail me a link'}
      </button>
    </form>
  );
}
