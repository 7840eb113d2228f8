// Package pgcohort reads a cohort from a PostgreSQL database: the rows
// of a query, with bound parameters, in a read-only transaction, into
// the typed columns of a cohort.Frame, with a SHA-256 of the rows as
// read for the audit's provenance.
//
// It is a package of its own so that only programs that read from a
// database link the driver (pgx); package audit takes a Query through
// its Source interface and knows nothing of databases.
//
// # Connection
//
// The connection is a PostgreSQL URL (postgresql://user@host:port/db)
// or keyword/value string (host=… dbname=…), or empty: then the
// standard environment variables (PGHOST, PGPORT, PGDATABASE, PGUSER,
// PGPASSWORD, PGSERVICE, PGSSLMODE, …) and the password file (PGPASSFILE
// or ~/.pgpass) give the settings, as for psql. Without a host the
// server's local socket is tried first. A connection that gives no
// connect_timeout (nor PGCONNECT_TIMEOUT) waits at most 30 seconds, and
// one without application_name is named riskaudit on the server.
//
// # Parameters
//
// A query names its parameters @name (a letter or _ then letters,
// digits or _; not inside string constants, quoted identifiers,
// dollar-quoted strings or comments). They are replaced by the protocol's
// placeholders $1, $2, … and the values are sent apart from the SQL, as
// text that the server reads as the placeholder's type; they are never
// pasted into the SQL. Every placeholder needs a value and every value a
// placeholder.
//
// # Types
//
// Values come in the binary protocol. A numeric request reads boolean
// (1 or 0), smallint, integer, bigint, real, double precision and numeric
// columns (and text, parsed as in a CSV file); a categorical request reads
// text, varchar, char(n) (trailing blanks dropped), name, enumerated
// types, boolean ("true", "false"), integers, real, double precision and
// numeric (as PostgreSQL prints them), date, timestamp and timestamptz
// (ISO 8601, timestamptz in UTC) and uuid. NULL is missing, and so are
// the missing-value markers in text (as in a Parquet file); NaN is
// missing except where Request.NaNIsError; an infinite value is an error
// naming its row. A real (float4) value is read as the decimal number
// PostgreSQL prints for it (0.1, not 0.100000001490116), as a CSV export
// of the same rows would hold.
//
// # The rows' SHA-256
//
// QueryInfo.RowsSHA256 is the SHA-256 of the rows exactly as
// PostgreSQL's COPY writes them in its binary format: the 19-byte header
// (the signature PGCOPY\n\377\r\n\0, flags 0, no header extension), for
// every row its number of fields (16 bits) and, for each field, its
// length (32 bits, −1 for NULL) and its value in the type's binary
// format, and the trailer −1 (16 bits); every integer big-endian. Every
// column of the result counts, requested or not, in the order the rows
// came. So anyone can check it without riskaudit:
//
//	psql -Atc "\copy (SELECT …) to stdout with (format binary)" | sha256sum
//
// with the parameters written into the query. The rows must come in the
// same order: a query without ORDER BY has no defined order.
package pgcohort

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"errors"
	"fmt"
	"net"
	"net/url"
	"strconv"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"

	"github.com/riskaudit/riskaudit/cohort"
)

// Serialisation names the rows' serialisation in the provenance.
const Serialisation = "PostgreSQL COPY binary format (COPY … TO STDOUT WITH (FORMAT binary)) of every column, rows in the order read"

// DefaultConnectTimeout bounds a connection attempt whose settings give
// no connect_timeout.
const DefaultConnectTimeout = 30 * time.Second

// Query is a cohort read by one SQL query from a PostgreSQL server.
type Query struct {
	cfg    *pgx.ConnConfig
	st     *statement
	args   []any
	params []Param
	unused []string
	file   string
	label  string
	server string
}

// New checks the connection settings (conn, or the environment when
// conn is empty) and the query, and binds params to the query's @name
// placeholders (every placeholder needs one; see Unused for those left
// over); it does not connect. file is the file the query was read
// from, or empty for a query given inline. Errors are *Error.
func New(conn, sql, file string, params []Param) (*Query, error) {
	q := &Query{file: file, label: file, params: params}
	if q.label == "" {
		q.label = "the query"
	}
	cfg, err := pgx.ParseConfig(conn)
	if err != nil {
		return nil, &Error{Server: "PostgreSQL", Msg: "cannot read the connection settings: " + parseConfigMessage(err), Kind: ErrSettings, Err: err}
	}
	if cfg.ConnectTimeout == 0 {
		cfg.ConnectTimeout = DefaultConnectTimeout
	}
	if cfg.RuntimeParams["application_name"] == "" {
		cfg.RuntimeParams["application_name"] = "riskaudit"
	}
	q.cfg, q.server = cfg, ServerURL(&cfg.Config)
	if strings.TrimSpace(sql) == "" {
		return nil, &Error{Server: q.server, Query: q.label, Msg: "the query is empty", Kind: ErrParam}
	}
	if q.st, err = parseStatement(sql); err == nil {
		q.args, q.params, q.unused, err = q.st.bind(params)
	}
	if err != nil {
		e := &Error{Server: q.server, Query: q.label, Msg: err.Error(), Kind: ErrParam}
		var pe *positionError
		if errors.As(err, &pe) && pe.offset >= 0 {
			e.Line, e.Column = lineCol(sql, pe.offset)
		}
		return nil, e
	}
	return q, nil
}

// parseConfigMessage is the driver's reason a connection string cannot
// be read, without the string itself (which may hold a password).
func parseConfigMessage(err error) string {
	var pe *pgconn.ParseConfigError
	if !errors.As(err, &pe) {
		return "invalid settings"
	}
	s, inner := pe.Error(), errors.Unwrap(pe)
	if inner != nil {
		s = strings.TrimSuffix(s, " ("+inner.Error()+")")
	}
	if i := strings.LastIndex(s, "`: "); i >= 0 {
		s = s[i+3:]
	}
	var ue *url.Error
	switch {
	case errors.As(inner, &ue):
		s += " (" + ue.Err.Error() + ")"
	case inner != nil && pe.ConnString == "":
		s += " (" + inner.Error() + ")"
	}
	return s
}

// ServerURL writes connection settings as a PostgreSQL URL without the
// password: postgresql://user@host:port/database, or
// postgresql://user@/database?host=/socket/folder&port=5432 for a local
// socket.
func ServerURL(c *pgconn.Config) string {
	u := url.URL{Scheme: "postgresql", User: url.User(c.User), Path: "/" + c.Database}
	port := strconv.Itoa(int(c.Port))
	if strings.HasPrefix(c.Host, "/") {
		return u.String() + "?host=" + strings.NewReplacer("%", "%25", "&", "%26", "#", "%23", " ", "%20").Replace(c.Host) + "&port=" + port
	}
	u.Host = net.JoinHostPort(c.Host, port)
	return u.String()
}

// server is the host and port, or the socket, of the settings.
func server(c *pgconn.Config) string {
	port := strconv.Itoa(int(c.Port))
	if strings.HasPrefix(c.Host, "/") {
		return c.Host + "/.s.PGSQL." + port
	}
	return net.JoinHostPort(c.Host, port)
}

// Name is how messages and reports name the data: the server's URL
// (without password) and the query's file.
func (q *Query) Name() string {
	if q.file == "" {
		return q.server + " (inline query)"
	}
	return q.server + " (query " + q.file + ")"
}

// Server is the connection as a URL without its password.
func (q *Query) Server() string { return q.server }

// File is the file the query was read from, or empty.
func (q *Query) File() string { return q.file }

// Load connects, runs the query in a read-only transaction and reads the
// requested columns of its rows (opt's Rename and Missing apply; the
// other options are for files). The frame's Query describes the rows,
// with their SHA-256. A cancelled ctx stops the read (the server is
// asked to cancel the query) and returns context.Cause(ctx).
func (q *Query) Load(ctx context.Context, reqs []cohort.Request, opt cohort.Options) (*cohort.Frame, error) {
	fr, err := q.load(ctx, reqs, opt)
	if err != nil && ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	return fr, err
}

func (q *Query) load(ctx context.Context, reqs []cohort.Request, opt cohort.Options) (*cohort.Frame, error) {
	conn, err := pgx.ConnectConfig(ctx, q.cfg)
	if err != nil {
		return nil, q.connectError(err)
	}
	defer conn.Close(context.WithoutCancel(ctx))
	tx, err := conn.BeginTx(ctx, pgx.TxOptions{AccessMode: pgx.ReadOnly})
	if err != nil {
		return nil, q.queryError(err, "cannot start a read-only transaction: ")
	}
	defer tx.Rollback(context.WithoutCancel(ctx))
	sd, err := tx.Prepare(ctx, "riskaudit_cohort", q.st.sql)
	if err != nil {
		return nil, q.queryError(err, "")
	}
	types, err := typeNames(ctx, tx, sd.Fields)
	if err != nil {
		return nil, q.queryError(err, "cannot read the result's types: ")
	}
	header := make([]string, len(sd.Fields))
	info := &cohort.QueryInfo{System: "postgresql", Server: server(&q.cfg.Config), Database: q.cfg.Database, User: q.cfg.User,
		ServerVersion: conn.PgConn().ParameterStatus("server_version"), SQL: q.st.orig, File: q.file,
		Parameters: make([]cohort.QueryParam, 0, len(q.params)), Columns: make([]cohort.QueryColumn, len(sd.Fields)),
		Serialisation: Serialisation, ReadOnly: true}
	for _, p := range q.params {
		info.Parameters = append(info.Parameters, cohort.QueryParam{Name: p.Name, Value: p.Value})
	}
	for i, f := range sd.Fields {
		header[i] = f.Name
		if to, ok := opt.Rename[f.Name]; ok {
			header[i] = to
		}
		info.Columns[i] = cohort.QueryColumn{Name: f.Name, Type: types[i].name}
	}
	rd, err := newReaders(q.Name(), header, sd.Fields, types, reqs, opt)
	if err != nil {
		return nil, err
	}
	rd.reserve(q.estimateRows(ctx, tx))
	args := append([]any{pgx.QueryResultFormats{pgx.BinaryFormatCode}}, q.args...)
	rows, err := tx.Query(ctx, "riskaudit_cohort", args...)
	if err != nil {
		return nil, q.queryError(err, "")
	}
	defer rows.Close()
	h := sha256.New()
	buf := make([]byte, 0, 1<<16)
	buf = append(buf, copyHeader...)
	n := 0
	for rows.Next() {
		vals := rows.RawValues()
		buf = binary.BigEndian.AppendUint16(buf, uint16(len(vals)))
		for _, v := range vals {
			if v == nil {
				buf = binary.BigEndian.AppendUint32(buf, 0xFFFFFFFF)
				continue
			}
			buf = binary.BigEndian.AppendUint32(buf, uint32(len(v)))
			buf = append(buf, v...)
		}
		if len(buf) >= 1<<16-1024 {
			h.Write(buf)
			buf = buf[:0]
		}
		if err := rd.row(vals, n); err != nil {
			return nil, err
		}
		n++
		if n&0xFFFF == 0 && ctx.Err() != nil {
			return nil, context.Cause(ctx)
		}
	}
	if err := rows.Err(); err != nil {
		return nil, q.queryError(err, "")
	}
	buf = binary.BigEndian.AppendUint16(buf, 0xFFFF)
	h.Write(buf)
	if n == 0 {
		return nil, &cohort.Error{File: q.Name(), Msg: "the query returned no rows", Kind: cohort.ErrEmpty}
	}
	info.Rows = n
	info.RowsSHA256 = hex.EncodeToString(h.Sum(nil))
	return cohort.NewFrame(q.Name(), header, n, rd.columns(reqs), info), nil
}

// estimateRows is the planner's estimate of the query's rows (0 when it
// gives none), so that the columns are made large enough at once: a
// column grown by doubling copies itself and clears new memory, which
// cost more than decoding the values. An estimate cannot be wrong in any
// way that matters: the columns still grow as needed.
func (q *Query) estimateRows(ctx context.Context, tx pgx.Tx) int {
	var plan []struct {
		Plan struct {
			Rows float64 `json:"Plan Rows"`
		} `json:"Plan"`
	}
	// In a savepoint: a failing EXPLAIN (a parameter that does not read
	// as its type) must leave the transaction usable, so that the query
	// itself reports the problem.
	sp, err := tx.Begin(ctx)
	if err != nil {
		return 0
	}
	defer sp.Rollback(context.WithoutCancel(ctx))
	if err := sp.QueryRow(ctx, "EXPLAIN (FORMAT JSON) "+q.st.sql, q.args...).Scan(&plan); err != nil || len(plan) == 0 {
		return 0
	}
	return int(min(max(plan[0].Plan.Rows, 0), 1<<24))
}

// copyHeader is the header of PostgreSQL's binary COPY format: the
// signature, the flags (none) and the length of the header extension
// (none).
var copyHeader = []byte("PGCOPY\n\xff\r\n\x00\x00\x00\x00\x00\x00\x00\x00\x00")

// connectError is a connection that could not be made, with the
// driver's reason on one line.
func (q *Query) connectError(err error) error {
	msg := err.Error()
	var ce *pgconn.ConnectError
	if errors.As(err, &ce) {
		if inner := errors.Unwrap(ce); inner != nil {
			msg = inner.Error()
		}
	}
	return &Error{Server: q.server, Msg: "cannot connect: " + msg, Kind: ErrConnect, Err: err}
}

// queryError is an error of the server or the connection while the
// query ran, with its position in the query's text when the server
// gives one.
func (q *Query) queryError(err error, prefix string) error {
	e := &Error{Server: q.server, Query: q.label, Kind: ErrQuery, Err: err}
	var pe *pgconn.PgError
	if !errors.As(err, &pe) {
		e.Msg = prefix + err.Error()
		if pgconn.SafeToRetry(err) || errors.As(err, new(*net.OpError)) {
			e.Kind, e.Query = ErrConnect, ""
			e.Msg = "the connection failed: " + err.Error()
		}
		return e
	}
	e.Msg = prefix + pe.Message + " (SQLSTATE " + pe.Code + ")"
	if pe.Detail != "" {
		e.Msg += "; " + pe.Detail
	}
	if pe.Hint != "" {
		e.Msg += "; hint: " + pe.Hint
	}
	if pe.Position > 0 && prefix == "" {
		e.Line, e.Column = q.st.position(int(pe.Position))
	}
	return e
}

// typeInfo is a result column's type as the catalogue names it.
type typeInfo struct {
	name string
	enum bool
}

// typeNames asks the catalogue for the name of each field's type (with
// its modifier: numeric(5,1), character varying(20)) and whether it is
// an enumerated type.
func typeNames(ctx context.Context, tx pgx.Tx, fields []pgconn.FieldDescription) ([]typeInfo, error) {
	if len(fields) == 0 {
		return nil, nil
	}
	oids := make([]string, len(fields))
	mods := make([]string, len(fields))
	for i, f := range fields {
		oids[i] = strconv.FormatUint(uint64(f.DataTypeOID), 10)
		mods[i] = strconv.Itoa(int(f.TypeModifier))
	}
	rows, err := tx.Query(ctx, `SELECT format_type(u.o, u.m), t.typtype = 'e'
FROM unnest($1::oid[], $2::int4[]) WITH ORDINALITY AS u(o, m, n) LEFT JOIN pg_catalog.pg_type t ON t.oid = u.o
ORDER BY u.n`, "{"+strings.Join(oids, ",")+"}", "{"+strings.Join(mods, ",")+"}")
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	out := make([]typeInfo, 0, len(fields))
	for rows.Next() {
		var name *string
		var enum *bool
		if err := rows.Scan(&name, &enum); err != nil {
			return nil, err
		}
		t := typeInfo{name: fmt.Sprintf("type %d", fields[len(out)].DataTypeOID)}
		if name != nil {
			t.name = *name
		}
		t.enum = enum != nil && *enum
		out = append(out, t)
	}
	if err := rows.Err(); err != nil {
		return nil, err
	}
	if len(out) != len(fields) {
		return nil, fmt.Errorf("the catalogue named %d of %d types", len(out), len(fields))
	}
	return out, nil
}
