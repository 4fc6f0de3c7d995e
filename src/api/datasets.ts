/** Measured spectra: preview and upload of instrument exports, a stored dataset's columns, CSV downloads of cells. */
import {
  datasetCreatedReply, datasetPreviewReply, datasetReply,
  type DatasetCreated, type DatasetImportOptions, type DatasetPreview, type DatasetReply,
} from '../../shared/schema/api'
import { api, download, seg } from './client'

export type { DatasetCreated, DatasetImportOptions, DatasetPreview, DatasetReply }

function form(file: Blob, fileName: string, options: DatasetImportOptions): FormData {
  const body = new FormData()
  body.append('file', file, fileName)
  body.append('options', JSON.stringify(options))
  return body
}

/** How the server reads the file (columns with guesses, samples, first rows, a thinned plot); stores nothing. */
export function previewDataset(sheetId: string, file: Blob, fileName: string, options: DatasetImportOptions = {}): Promise<DatasetPreview> {
  return api.post(`/api/sheets/${seg(sheetId)}/datasets/preview`, undefined, datasetPreviewReply, { form: form(file, fileName, options) })
}

/** Stores the file's mapped columns as a dataset of the sheet's lab. */
export function uploadDataset(sheetId: string, file: Blob, fileName: string, options: DatasetImportOptions): Promise<DatasetCreated> {
  return api.post(`/api/sheets/${seg(sheetId)}/datasets`, undefined, datasetCreatedReply, { form: form(file, fileName, options) })
}

export function getDataset(datasetId: string): Promise<DatasetReply> {
  return api.get(`/api/datasets/${seg(datasetId)}`, datasetReply)
}

/** Downloads a cell's series or table as CSV, evaluated by the server from the live sheet. */
export function downloadCellCsv(sheetId: string, cellId: string, fallbackName: string): Promise<string> {
  return download(`/api/sheets/${seg(sheetId)}/cells/${seg(cellId)}/csv`, fallbackName)
}
