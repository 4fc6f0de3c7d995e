/**
 * createApp(deps): the Express app — middleware, the API routes, the developer mailbox, the built client and the
 * one error path. It never listens; server/index.ts does, and tests call it directly with an in-memory database.
 */
import express, { type Express } from 'express'
import helmet from 'helmet'
import cookieParser from 'cookie-parser'
import { readFileSync } from 'node:fs'
import type { AppDeps } from './deps'
import { sessionLoader } from './middleware/auth'
import { csrfGuard } from './middleware/csrf'
import { errorHandler, notFoundHandler } from './middleware/errorHandler'
import { authRoutes } from './routes/auth'
import { labRoutes } from './routes/labs'
import { invitationRoutes } from './routes/invitations'
import { sheetRoutes } from './routes/sheets'
import { datasetRoutes } from './routes/datasets'
import { EVALUATE_PATH, evaluateRoutes } from './routes/evaluate'
import { devMailRoutes } from './routes/devMail'
import { guestHeaders, snapshotRoutes } from './routes/snapshots'
import { clientFiles, clientPages } from './static'
import { sheetPagePreview } from './preview'
import { SHEET_MEDIA_TYPE } from '../shared/schema/sheet'
import './types'

export type { AppDeps, AppHooks } from './deps'

const VERSION: string = (() => {
  try {
    return (JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string }).version
  } catch {
    return '0.0.0'
  }
})()

export function createApp(deps: AppDeps): Express {
  const { config } = deps
  const app = express()
  app.disable('x-powered-by')
  app.set('trust proxy', config.trustProxy)

  // upgrade and HSTS only when the public address is https (a production server tried out over plain http keeps working)
  const publicHttps = config.publicUrl.startsWith('https:')
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: true,
        directives: {
          'img-src': ["'self'", 'data:', 'blob:'],
          'worker-src': ["'self'", 'blob:'],
          'connect-src': ["'self'"],
          // helmet's defaults also allow any https: origin for styles and fonts; Penumbra serves its own
          'style-src': ["'self'", "'unsafe-inline'"],
          'font-src': ["'self'", 'data:'],
          'upgrade-insecure-requests': publicHttps ? [] : null,
        },
      },
      strictTransportSecurity: publicHttps,
    }),
  )
  if (config.clientDir) app.use(clientFiles(config.clientDir))
  app.use(cookieParser())
  const json = express.json({ limit: config.maxBodyBytes, type: ['application/json', 'application/*+json', SHEET_MEDIA_TYPE] })
  app.use((req, res, next) => (EVALUATE_PATH.test(req.path) ? next() : json(req, res, next)))
  app.use(sessionLoader(deps))
  app.use(csrfGuard)

  const api = express.Router()
  api.use((_req, res, next) => {
    res.set('Cache-Control', 'no-store')
    next()
  })
  api.get('/health', (_req, res) => {
    res.json({ ok: true, version: VERSION })
  })
  api.use('/auth', authRoutes(deps))
  const { labSheets, sheets } = sheetRoutes(deps)
  const snap = snapshotRoutes(deps)
  api.use('/labs/:labId/sheets', labSheets)
  api.use('/labs/:labId/reviews', snap.labReviews)
  api.use('/sheets/:sheetId', snap.sheetScoped)
  api.use('/snapshots', snap.snapshots)
  api.use('/reviews', snap.reviews)
  api.use('/comments', snap.comments)
  api.use('/guest-links', snap.links)
  api.use('/guest', snap.guest)
  api.use('/labs', labRoutes(deps))
  api.use('/invitations', invitationRoutes(deps))
  const { sheetDatasets, datasets } = datasetRoutes(deps)
  api.use('/sheets', sheetDatasets)
  api.use('/sheets', sheets)
  api.use('/datasets', datasets)
  api.use('/evaluate', evaluateRoutes(config))
  api.use(notFoundHandler)
  app.use('/api', api)

  if (!config.production) app.use('/dev', devMailRoutes(deps))
  // a guest's page (served by the client) is never indexed and never sends a referrer
  app.use('/guest', (_req, res, next) => {
    guestHeaders(res)
    next()
  })
  if (config.clientDir) app.use(clientPages(config.clientDir, sheetPagePreview(deps)))

  app.use(notFoundHandler)
  app.use(errorHandler(config.maxBodyBytes))
  return app
}
