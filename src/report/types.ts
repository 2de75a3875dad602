/**
 * The data contract between src/report (which writes it) and site/ (which lays it out). The
 * types are derived from the strict schemas in src/layout/pageSchema.ts, which both sides load
 * the data with; they are re-exported here for the page builder's modules.
 */
export {
  GENERATED_MARK,
  type CheckView,
  type ComparisonView,
  type DownloadLink,
  type FigureRef,
  type Headline,
  type HistoryView,
  type InputUsed,
  type KeyValue,
  type MethodText,
  type PageLink,
  type PublishedChange,
  type PublishedView,
  type RecoveryView,
  type ReleaseData,
  type ReleaseSummary,
  type RowMark,
  type RungData,
  type SiteData,
  type SystemPageView,
  type SystemsIndexView,
  type TableColumn,
  type TableView,
} from '../layout/pageSchema.ts';
