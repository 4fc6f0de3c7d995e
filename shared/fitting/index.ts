/** Fits with uncertainties: straight lines, Tauc and Urbach band-edge fits, and Levenberg–Marquardt model fits. */
export { FitError } from './errors'
export { linearFit } from './linear'
export type { LinearFit } from './linear'
export { taucFit, urbachFit } from './edges'
export type { TaucFit, UrbachFit } from './edges'
export { fitModel } from './model'
export type { ModelFit, ModelFitOptions } from './model'
