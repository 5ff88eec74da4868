package report

// loadFolder reads an output folder written by `gridstage run`.
func loadFolder(path string) (Run, error) {
	return Run{}, badInput(path, "reading output folders needs the formats reader, which is not in this build yet")
}

// loadFolderFile reads the output folder that holds one of its files.
func loadFolderFile(path string) (Run, error) {
	return Run{}, badInput(path, "reading Parquet or Arrow output needs the formats reader, which is not in this build yet")
}
