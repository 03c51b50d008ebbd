/** A file size for people: "830 bytes", "12.4 kB", "7.7 MB" (1 kB = 1024 bytes, like the import limit). */
export function formatFileSize(bytes: number): string {
	if (bytes < 1024) return `${bytes} byte${bytes === 1 ? '' : 's'}`;
	if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} kB`;
	return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}
