package web

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/components/export"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/share"
)

// designFormat is the design file itself as a download, beside the export
// formats of components/export.
var designFormat = export.Format{Name: "design", ContentType: "application/json", Ext: ".json"}

// designToken is the token of a design that sized, which the page's
// download, save and compare controls post; "" and the reason when the
// design is too large for one. linkNote is "" when the token also fits a
// link (share.MaxTokenBytes), else says plainly why the page offers no
// link: a long logged profile makes a design too large for a URL.
func designToken(d *sizing.Design) (token, note, linkNote string) {
	if d == nil {
		return "", "", ""
	}
	size := len(d.Load.ProfileCSVText) // a lower bound, known without writing the design out
	var data []byte
	if size <= share.MaxDesignBytes {
		var err error
		if data, err = json.Marshal(d); err != nil {
			return "", "This design could not be written as a design file.", ""
		}
		size = len(data)
	}
	if size > share.MaxDesignBytes {
		how := "capbank size"
		if d.Load.ProfileCSVText != "" {
			how = "capbank size --profile and the log"
		}
		return "", fmt.Sprintf("This design is too large to carry in a link, a download or a save from this page (its design file would be more than %s); size and export it with %s.",
			figures.SI(share.MaxDesignBytes, "B", 3), how), ""
	}
	key := sha256.Sum256(data)
	if r, ok := designTokens.get(key); ok {
		return r.token, r.note, r.linkNote
	}
	r := newDesignToken(d, data)
	designTokens.put(key, r)
	return r.token, r.note, r.linkNote
}

// newDesignToken writes the token of design d, whose design file is data.
// It compresses at the fastest level, which serves as the link too when
// it is short enough; only a token too long for a link, though within
// twice its length, is tried again at the best level, which may bring it
// within a link's length.
func newDesignToken(d *sizing.Design, data []byte) tokenResult {
	tok, err := share.EncodeFast(data)
	if err != nil {
		return tokenResult{note: "This design could not be written as a design file."}
	}
	if len(tok) > share.MaxTokenBytes && len(tok) <= 2*share.MaxTokenBytes {
		if link, err := share.Encode(data); err == nil {
			return tokenResult{token: link}
		}
	}
	if len(tok) > share.MaxTokenBytes {
		what := "This design"
		if d.Load.ProfileCSVText != "" {
			what = "This design's logged profile makes it"
		}
		return tokenResult{token: tok, linkNote: fmt.Sprintf("%s too large for a link: the link would be %d characters long, and links hold at most %d. Save it here, or download the design file and share that.",
			what, len(tok), share.MaxTokenBytes)}
	}
	return tokenResult{token: tok}
}

// formParseError is the error of reading the request's form, if any.
func formParseError(r *http.Request) error {
	_, err := readFormBody(r)
	return err
}

// postExport is POST /export/{format}: the design (see readExportDesign)
// sized and written as a download. format is boq-csv, boq-xlsx, boq-json,
// pdf (with paper=a4 or letter) or design (the design file itself, its
// library cells written out in full so capbank size reads it anywhere).
// cell chooses a feasible candidate other than the recommended one.
func (s *Server) postExport(c echo.Context) error {
	name := c.Param("format")
	f, ok := export.LookupFormat(name)
	if name == designFormat.Name {
		f, ok = designFormat, true
	}
	if !ok {
		return echo.ErrNotFound
	}
	paper, err := export.ParsePaper(c.QueryParam("paper"))
	if err != nil {
		return exportRefused("paper", "must be a4 or letter")
	}
	d, _, err := s.designFrom(c, fromBodyOrForm)
	if err != nil {
		return err
	}
	cellID := c.QueryParam("cell")
	if cellID == "" {
		cellID = c.FormValue("cell")
	}
	opt := export.PDFOptions{Paper: paper, Date: s.now()}
	out, err := compute(s, c, func(ctx context.Context) (exported, error) { return makeExport(ctx, d, f, cellID, opt) })
	if err != nil {
		return err
	}
	h := c.Response().Header()
	h.Set(echo.HeaderContentDisposition, fmt.Sprintf("attachment; filename=%q", export.FileName(d.Name, out.suffix, f)))
	h.Set("Cache-Control", "no-store")
	return c.Blob(http.StatusOK, f.ContentType, out.data)
}

// exported is an export written: its bytes and the file-name suffix.
type exported struct {
	data   []byte
	suffix string
}

// makeExport sizes d and writes its export f (of cellID, or of the
// recommended cell when cellID is empty).
func makeExport(ctx context.Context, d *sizing.Design, f export.Format, cellID string, opt export.PDFOptions) (exported, error) {
	rep, err := sizing.SizeContext(ctx, d)
	if err != nil {
		return exported{}, err
	}
	var buf bytes.Buffer
	if f.Name == designFormat.Name {
		if err := jsonEncode(&buf, d, true); err != nil {
			return exported{}, err
		}
		return exported{buf.Bytes(), "design"}, nil
	}
	boq, err := exportBOQ(d, rep, cellID, f)
	if err != nil {
		return exported{}, err
	}
	suffix := "boq"
	if f.Name == "pdf" {
		suffix = "report-" + string(opt.Paper)
	}
	if cellID != "" && (rep.Recommended == nil || cellID != *rep.Recommended) {
		suffix = fileWord(cellID) + "-" + suffix
	}
	if err := export.Write(&buf, f, d, rep, boq, opt); err != nil {
		return exported{}, err
	}
	return exported{buf.Bytes(), suffix}, nil
}

// exportBOQ is the bill of quantities of the export (export.BOQFor); a
// bank the report does not have is the request's cell field at fault.
func exportBOQ(d *sizing.Design, r *sizing.Report, cellID string, f export.Format) (*sizing.BOQ, error) {
	b, err := export.BOQFor(d, r, cellID, f)
	if bank := (*export.BankError)(nil); errors.As(err, &bank) {
		return nil, exportRefused("cell", bank.Error())
	}
	return b, err
}

// fileWord reduces text to what a file name may hold: lower-case letters,
// digits, '-' and '_', at most 40 characters.
func fileWord(text string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(text) {
		if b.Len() >= 40 {
			break
		}
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9', r == '_', r == '-':
			b.WriteRune(r)
		default:
			b.WriteByte('-')
		}
	}
	if w := strings.Trim(b.String(), "-"); w != "" {
		return w
	}
	return "cell"
}
