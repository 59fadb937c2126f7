/** Hands a fetched file to the browser's own download, as a click on a link to it would. */
export function saveFile(blob: Blob, filename: string): void {
  const url = URL.createObjectURL(blob)
  const link = document.createElement('a')
  link.href = url
  link.download = filename
  link.rel = 'noopener'
  document.body.appendChild(link)
  link.click()
  link.remove()
  // The download has its own copy once started; the object URL only holds memory after that.
  setTimeout(() => URL.revokeObjectURL(url), 0)
}
