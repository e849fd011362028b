#!/usr/bin/perl
# Writes a help2man include file (roff) for cavitas from its own help texts:
#   perl man_sections.pl CAVITAS_EXECUTABLE MODULE_RELDIR > cavitas.h2m
# help2man makes the page's header, NAME and SYNOPSIS from 'cavitas --help' and
# '--version'; this script supplies DESCRIPTION and OPTIONS from 'cavitas --help'
# and a COMMANDS section from each 'cavitas COMMAND --help', because help2man
# runs the indented examples and formulas of those texts together. It reads the
# layout CLI11 prints: a description, "Usage: ...", then groups ("Options:") of
# entries indented by 2, their descriptions continued at a fixed column.
# (Perl: help2man is a Perl program, so Perl is there whenever it is.)
use strict;
use warnings;

my ($exe, $module_reldir) = @ARGV;
die "usage: man_sections.pl CAVITAS_EXECUTABLE MODULE_RELDIR\n" unless defined $module_reldir;

sub help_of {
    my @args = @_;
    open(my $fh, '-|', $exe, @args) or die "cannot run $exe: $!\n";
    local $/;
    my $text = <$fh>;
    close($fh) or die "'$exe @args' failed (status $?)\n";
    return $text;
}

# Roff-safe text: backslashes, a leading dot or quote, and dashes that begin an
# option or stand alone (minus signs); a hyphen inside a word stays a hyphen.
sub esc {
    my ($s) = @_;
    $s =~ s/\\/\\e/g;
    # An option's name is dashes all through (--from-store), never a hyphen to break at.
    $s =~ s{(?<![\w.])(--?\w[\w-]*)}{ (my $o = $1) =~ s/-/\\-/g; $o }ge;
    $s =~ s/(?<![\w.\\])-/\\-/g;
    $s =~ s/^([.'])/\\&$1/;
    return $s;
}

# Splits a CLI11 help text into its description, usage and groups.
sub parse {
    my ($text) = @_;
    my (@desc, $usage, @groups);
    my $entry;
    for my $line (split /\n/, $text) {
        if (!defined $usage) {
            if ($line =~ /^Usage: (.*)$/) { $usage = $1; next; }
            push @desc, $line;
            next;
        }
        if ($line =~ /^(\S.*):\s*$/) {
            push @groups, { heading => $1, entries => [] };
            $entry = undef;
        } elsif ($line =~ /^  (\S.*?)(?:\s{2,}(\S.*))?$/ && @groups) {
            $entry = { term => $1, body => [defined $2 ? $2 : ()] };
            push @{ $groups[-1]{entries} }, $entry;
        } elsif ($line =~ /^ {3,}(.*)$/ && $entry) {
            push @{ $entry->{body} }, $line;
        } elsif ($line =~ /^\S/) {
            push @groups, { heading => '', entries => [], text => $line };
            $entry = undef;
        }
    }
    die "no 'Usage:' line in the help text\n" unless defined $usage;
    return (\@desc, $usage, \@groups);
}

# Lines of prose (filled by roff) with indented runs kept as they are printed.
sub prose {
    my ($indent, @lines) = @_;
    my ($out, $pre, $started) = ('', 0, 0);
    for my $line (@lines) {
        my $rest = $line;
        $rest =~ s/^ {$indent}//;
        if ($rest =~ /^\s*$/) {
            if ($pre) { $out .= ".fi\n.RE\n"; $pre = 0; }
            $out .= ".PP\n" if $started;
            $started = 0;
        } elsif ($rest =~ /^ /) {
            if (!$pre) { $out .= ".RS 2\n.nf\n"; $pre = 1; }
            $rest =~ s/^  //;
            $out .= esc($rest) . "\n";
            $started = 1;
        } else {
            if ($pre) { $out .= ".fi\n.RE\n"; $pre = 0; }
            $out .= esc($rest) . "\n";
            $started = 1;
        }
    }
    $out .= ".fi\n.RE\n" if $pre;
    $out =~ s/(?:\.PP\n)+$//;
    return $out;
}

# The entries of each group (but the groups named in %skip) as tagged paragraphs.
sub groups {
    my ($groups, $headed, %skip) = @_;
    my $out = '';
    for my $g (@$groups) {
        next if $skip{ $g->{heading} } || defined $g->{text};
        next unless @{ $g->{entries} };
        $out .= ".PP\n\\fI" . esc($g->{heading}) . "\\fR\n" if $headed;
        for my $e (@{ $g->{entries} }) {
            my ($names, $type) = $e->{term} =~ /^(\S+)(?:\s+(.*))?$/;
            $out .= ".TP\n\\fB" . esc($names) . "\\fR" . (defined $type ? ' ' . esc($type) : '') . "\n";
            # The first body line may be on the term's line (no indentation).
            my @body = @{ $e->{body} };
            my ($column) = map { /^( +)\S/ ? length($1) : () } @body;
            $column //= 30;
            @body = map { /^ / ? $_ : (' ' x $column) . $_ } @body;
            my $p = prose($column, @body);
            $p =~ s/^\.PP$/.IP/mg;
            $out .= $p;
        }
    }
    return $out;
}

my ($desc, $usage, $groups) = parse(help_of('--help'));
my @commands = map { $_->{term} =~ /^(\S+)/ ? $1 : () }
               map { @{ $_->{entries} } } grep { $_->{heading} eq 'Subcommands' } @$groups;
die "no subcommands found in 'cavitas --help'\n" unless @commands;

# The description's first line repeats the NAME section.
shift @$desc while @$desc && ($desc->[0] =~ /^cavitas - / || $desc->[0] =~ /^\s*$/);
print "[=DESCRIPTION]\n", prose(0, @$desc);
print "[=OPTIONS]\n", groups($groups, 0, 'Subcommands' => 1);

print "[COMMANDS]\n";
for my $cmd (@commands) {
    my ($d, $u, $g) = parse(help_of($cmd, '--help'));
    print ".SS \"", esc($u), "\"\n", prose(0, @$d), groups($g, 1);
}

print <<"EOF";
[ENVIRONMENT]
.TP
.B CAVITAS_CACHE_DIR
Folder for the FFT plans cavitas keeps between runs (a few kB); empty: keep
nothing. Default: \\fI\$XDG_CACHE_HOME/cavitas\\fR, else \\fI~/.cache/cavitas\\fR.
Results are the same with or without it.
.TP
.B CAVITAS_STAGE_TIMES
Set to 1: print the wall time of each analysis stage to standard error.
[FILES]
.TP
.I @{[esc($module_reldir)]}/cavitas-report.so
The report renderer (cairo and pango), loaded by \\fBcavitas report\\fR only;
looked for beside the executable first, then in this folder relative to it.
[SEE ALSO]
README.md and DEVELOPERS.md in the package's documentation folder (Debian:
\\fI/usr/share/doc/cavitas\\fR): the demo route, how the verdict is reached,
the tests.
EOF
