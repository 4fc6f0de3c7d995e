/** The members of a lab, for names, reviewer pickers and @mention completion; an empty list when they cannot be read. */
import { computed, ref, watch, type Ref } from 'vue'
import { listMembers, type Member } from '@/api/labs'

export function useLabMembers(labId: Ref<string | null | undefined>) {
  const members = ref<Member[]>([])
  watch(
    labId,
    async (id) => {
      members.value = []
      if (!id) return
      try {
        const list = await listMembers(id)
        if (labId.value === id) members.value = list
      } catch {
        // names then come from the replies themselves
      }
    },
    { immediate: true },
  )
  const names = computed<ReadonlyMap<string, string>>(() => new Map(members.value.map((m) => [m.userId, m.name])))
  const people = computed(() => members.value.map((m) => ({ id: m.userId, name: m.name, role: m.role })))
  return { members, names, people }
}
