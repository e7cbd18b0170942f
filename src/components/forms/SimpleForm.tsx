import { zodResolver } from '@hookform/resolvers/zod';
import { useForm, type FieldValues, type Path, type Resolver } from 'react-hook-form';
import { sendJson } from '../api-client';
import { formSchemas, type FormSchemaName } from './form-schemas';
import { useHydrated } from '../useHydrated';

/** One field of a flat form; `name` may be a dot path (holder.email). */
export type FieldSpec = {
  name: string;
  label: string;
  /** `money`: an amount in the currency as typed ("12.50"), sent as text and read exactly by the schema. */
  kind: 'text' | 'textarea' | 'number' | 'date' | 'select' | 'checkbox' | 'email' | 'money';
  options?: { value: string; label: string }[];
  help?: string;
  placeholder?: string;
  /** Show the field only while another field has this value. */
  showIf?: { field: string; equals: string };
};

export type SimpleFormProps = {
  schema: FormSchemaName;
  action: string;
  method?: 'POST' | 'PUT' | 'PATCH';
  fields: FieldSpec[];
  submitLabel: string;
  defaults?: Record<string, unknown>;
  /** Where to go after success: reload this page (default) or another address. */
  then?: { redirect: string } | 'reload';
  testId?: string;
};

const get = (values: unknown, path: string): unknown => path.split('.').reduce<unknown>((v, key) => (v as Record<string, unknown> | undefined)?.[key], values);

/**
 * The forms of the land pages: react-hook-form with the same zod schema the endpoint uses, errors
 * from the server shown beside the field they name.
 */
export default function SimpleForm({ schema, action, method = 'POST', fields, submitLabel, defaults = {}, then = 'reload', testId }: SimpleFormProps) {
  const hydrated = useHydrated();
  const { register, handleSubmit, setError, watch, formState } = useForm<FieldValues>({
    resolver: zodResolver(formSchemas[schema] as never) as unknown as Resolver<FieldValues>,
    defaultValues: defaults,
  });
  const values = watch();
  const { errors, isSubmitting } = formState;
  const visible = fields.filter((f) => !f.showIf || get(values, f.showIf.field) === f.showIf.equals);

  const onSubmit = handleSubmit(async (input) => {
    const result = await sendJson(method, action, input);
    if (result.ok) {
      if (then === 'reload') window.location.reload();
      else window.location.assign(then.redirect);
      return;
    }
    const field = result.error.field && fields.some((f) => f.name === result.error.field) ? result.error.field : 'root';
    setError(field as Path<FieldValues>, { message: result.error.message });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-3" data-hydrated={hydrated ? 'true' : undefined} data-testid={testId}>
      {visible.map((f) => {
        const id = `${testId ?? schema}-${f.name.replace(/\./g, '-')}`;
        const message = (get(errors, f.name) as { message?: string } | undefined)?.message;
        const describedBy = message ? `${id}-error` : f.help ? `${id}-help` : undefined;
        const common = { id, 'aria-invalid': message ? ('true' as const) : ('false' as const), 'aria-describedby': describedBy };
        return (
          <div key={f.name}>
            {f.kind === 'checkbox' ? (
              <label className="flex items-center gap-2 text-sm font-medium">
                <input type="checkbox" className="h-4 w-4 accent-moss-600" {...common} {...register(f.name)} />
                {f.label}
              </label>
            ) : (
              <>
                <label htmlFor={id} className="field-label">{f.label}</label>
                {f.kind === 'textarea' ? (
                  <textarea rows={5} className="field-input" placeholder={f.placeholder} {...common} {...register(f.name)} />
                ) : f.kind === 'select' ? (
                  <select className="field-input" {...common} {...register(f.name)}>
                    {f.options?.map((o) => <option key={o.value} value={o.value}>{o.label}</option>)}
                  </select>
                ) : (
                  <input
                    type={f.kind === 'number' ? 'number' : f.kind === 'money' ? 'text' : f.kind}
                    inputMode={f.kind === 'money' ? 'decimal' : undefined}
                    autoComplete={f.kind === 'money' ? 'off' : undefined}
                    step={f.kind === 'number' ? 'any' : undefined}
                    className="field-input"
                    placeholder={f.placeholder}
                    {...common}
                    {...register(f.name, f.kind === 'number' ? { valueAsNumber: true } : {})}
                  />
                )}
              </>
            )}
            {f.help && !message && <p id={`${id}-help`} className="mt-1 text-xs text-loam-600">{f.help}</p>}
            {message && <p id={`${id}-error`} role="alert" className="field-error">{message}</p>}
          </div>
        );
      })}
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : submitLabel}</button>
    </form>
  );
}
