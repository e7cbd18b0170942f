import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { signInSchema, type SignInInput } from '../lib/accounts.schemas';
import { postJson } from './api-client';
import { useHydrated } from './useHydrated';

export default function SignInForm() {
  const hydrated = useHydrated();
  const { register, handleSubmit, setError, formState } = useForm<SignInInput>({ resolver: zodResolver(signInSchema) });
  const { errors, isSubmitting } = formState;

  const onSubmit = handleSubmit(async (input) => {
    const next = new URLSearchParams(window.location.search).get('next') ?? undefined;
    const result = await postJson('/api/sign-in', { ...input, next });
    if (result.ok) {
      window.location.assign(`/sign-in/check-email?email=${encodeURIComponent(input.email)}`);
      return;
    }
    setError(result.error.field === 'email' ? 'email' : 'root', { message: result.error.message });
  });

  return (
    <form method="post" onSubmit={onSubmit} noValidate className="space-y-4" data-hydrated={hydrated ? 'true' : undefined}>
      <div>
        <label htmlFor="email" className="field-label">E-mail address</label>
        <input
          id="email"
          type="email"
          autoComplete="email"
          inputMode="email"
          className="field-input"
          placeholder="name@example.org"
          aria-invalid={errors.email ? 'true' : 'false'}
          aria-describedby={errors.email ? 'email-error' : undefined}
          {...register('email')}
        />
        {errors.email && <p id="email-error" role="alert" className="field-error">{errors.email.message}</p>}
        {errors.email?.message?.startsWith('No account') && <p className="mt-1 text-sm"><a href="/sign-up">Create an account</a></p>}
      </div>
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button w-full" disabled={isSubmitting}>
        {isSubmitting ? 'Sending…' : 'E-mail me a sign-in link'}
      </button>
    </form>
  );
}

