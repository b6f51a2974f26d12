package pipeline

// SaveOutput writes data to path atomically (a temporary file renamed
// over it: a reader never sees half a picture), refusing the log's own
// path (log).
func SaveOutput(path, log string, data []byte) error {
	if err := NotTheLog(path, log); err != nil {
		return err
	}
	return writeFileAtomic(path, data)
}
