package components

// LibraryProps is the cell library page.
type LibraryProps struct {
	Shell ShellProps
	// Filter is the search form: search text, voltage and capacitance
	// ranges, each with its message.
	Filter []FieldProps
	// Rows are the cells that pass the filter; Total how many the library
	// holds.
	Rows  []LibraryRowProps
	Total int
	// Writable is false when this capbank has no store: the library is the
	// demo cells alone.
	Writable bool
	// Notice is a line after an action ("Deleted my-cell.").
	Notice string
	// Import is the report of an import just made, or nil.
	Import *ImportReportProps
	// ExportQuery is the filter as a query string, for the export links.
	ExportQuery string
}

// LibraryRowProps is one cell in the library table, display-ready.
type LibraryRowProps struct {
	ID, Href, Name, Source                string
	RatedV, Capacitance, ESR, Mass, Price string
	ReadOnly                              bool
	DuplicateAction, DeleteAction         string
}

// ImportReportProps is a row-by-row import report.
type ImportReportProps struct {
	Imported           bool
	Accepted, Rejected int
	// Added and Updated count the accepted rows by what they did.
	Added, Updated int
	// Error is a problem with the file as a whole.
	Error string
	Rows  []ImportRowProps
}

// ImportRowProps is one row of an import report.
type ImportRowProps struct {
	Line     int
	ID       string
	Accepted bool
	// Action is what an accepted row did: added, updated or unchanged.
	Action string
	Reason string
}

// CellPageProps is one cell's page: its figures, and its form when it can
// be edited (or when it is new).
type CellPageProps struct {
	Shell ShellProps
	// Heading is the page's h1.
	Heading string
	// ID is the cell's id ("" for a new cell).
	ID string
	// ReadOnly is true for a demo cell; New for the add form.
	ReadOnly, New bool
	// Action is where the form posts.
	Action string
	// Fields are the cell's inputs, with their messages; ModuleFields its
	// module's, folded, ModuleOpen unfolding them when one is set or has
	// a problem.
	Fields       []FieldProps
	ModuleFields []FieldProps
	ModuleOpen   bool
	// ToleranceMessageID and ToleranceMessage are the slot for the
	// tolerance pair as a whole.
	ToleranceMessageID, ToleranceMessage string
	// Problems are every problem, for the summary at the top.
	Problems []ProblemProps
	Notice   string
	// Merit is the cell's own figures of merit, label and value.
	Merit [][2]string
	// DuplicateAction and DeleteAction post those actions ("" when not
	// offered); DesignHref opens the design page with this cell picked.
	DuplicateAction, DeleteAction, DesignHref string
	// Writable is false when this capbank has no store.
	Writable bool
	// Version is the version of the cell the form was opened at (0 for a
	// new cell), posted back so that a change made meanwhile by someone
	// else is not overwritten.
	Version int64
	// Stale is the cell's address when saving was refused because someone
	// else changed it since the form was opened ("" otherwise).
	Stale string
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
