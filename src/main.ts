/** Starts the client: fonts, Element Plus styles tuned by our theme, Pinia, the router, the session-ended handler. */
import '@fontsource/fira-sans/latin-400.css'
import '@fontsource/fira-sans/latin-500.css'
import '@fontsource/fira-sans/latin-600.css'
import '@fontsource/fira-mono/latin-400.css'
import '@fontsource/fira-mono/latin-500.css'
import './assets/fonts-greek.css'
import 'element-plus/dist/index.css'
import './assets/theme.css'

import { createApp } from 'vue'
import { createPinia } from 'pinia'
import { ElMessage } from 'element-plus'
import App from './App.vue'
import { router } from './router'
import { onUnauthorized } from './api/client'
import { useSessionStore } from './stores/session'
import { useLabsStore } from './stores/labs'

const app = createApp(App)
const pinia = createPinia()
app.use(pinia)
app.use(router)

// A 401 from any call means the session ended (signed out elsewhere, expired): say so once and ask to sign in again.
let noticeShown = false
onUnauthorized(() => {
  const session = useSessionStore(pinia)
  const wasSignedIn = session.signedIn
  session.setUser(null)
  useLabsStore(pinia).reset()
  const current = router.currentRoute.value
  if ((current.meta.access ?? 'signed-in') === 'signed-in') {
    if (wasSignedIn && !noticeShown) {
      noticeShown = true
      ElMessage.warning({ message: 'Your session has ended. Please sign in again.', onClose: () => (noticeShown = false) })
    }
    void router.push({ name: 'sign-in', query: { next: current.fullPath } })
  }
})

app.mount('#app')
