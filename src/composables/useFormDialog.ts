/**
 * The scaffolding of a small form dialog (create a lab, a new sheet, an invitation): the form is reset to its blank
 * values and its messages cleared each time the dialog opens; submitting validates, sends with a busy button, closes
 * the dialog on success and puts the server's per-field problems under their fields on failure. The dialog's form
 * carries `ref="formRef"`.
 */
import { reactive, ref, useTemplateRef, watch, type Ref } from 'vue'
import type { FormInstance } from 'element-plus'
import { useFormErrors } from '@/composables/useFormErrors'
import { useNarrow } from '@/composables/useNarrow'

export interface FormDialogOptions<F extends object, K extends string, R> {
  /** The dialog's v-model. */
  open: Ref<boolean>
  /** The fields whose server problems show under them (`ElFormItem :error="errors.x"`). */
  fields: readonly K[]
  /** The form's values when the dialog opens. */
  blank: () => F
  /** Sends the form; a rejection is a failure. */
  send: (form: F) => Promise<R>
  /** After a success, once the dialog is closed: the message and the event for the parent. */
  sent: (result: R) => void
  /** After a failure; `placed` tells whether a server problem landed under a field. */
  failed: (err: unknown, placed: boolean, errors: Record<K, string>) => void
}

export function useFormDialog<F extends object, K extends string, R>(options: FormDialogOptions<F, K, R>) {
  const form = reactive(options.blank()) as F
  const formRef = useTemplateRef<FormInstance>('formRef')
  const busy = ref(false)
  const narrow = useNarrow()
  const { errors, fromError, clear } = useFormErrors(options.fields)

  watch(options.open, (isOpen) => {
    if (isOpen) {
      Object.assign(form, options.blank())
      clear()
      formRef.value?.clearValidate()
    }
  })

  async function submit(): Promise<void> {
    if (!(await formRef.value?.validate().catch(() => false))) return
    busy.value = true
    try {
      const result = await options.send(form)
      options.open.value = false
      options.sent(result)
    } catch (err) {
      options.failed(err, fromError(err), errors)
    } finally {
      busy.value = false
    }
  }

  return { form, busy, errors, narrow, submit }
}
