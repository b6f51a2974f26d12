package diagnose

// RoleGuess is a role the reader assumed for a log's column where the log
// left a choice: which of a boosting library's eval sets is the training
// data, or a test split evaluated every epoch standing in for validation.
// A judgement rests on these assumptions, so every output states them
// (the screen, the Markdown summary, the JSON "roles"); the flags --train,
// --val, --train-dev and --test override them.
type RoleGuess struct {
	Column string `json:"column"` // the column's name as the log writes it, made printable
	Split  Split  `json:"split"`  // the split the column is taken for
	Source string `json:"source"` // what the assumption rests on, in a sentence
}

// Phrase states the assumption in a few words: `"validation_0-error" read
// as training`.
func (g RoleGuess) Phrase() string {
	return Printable(g.Column) + " read as " + g.Split.Phrase()
}
