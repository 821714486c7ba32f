/** The study cell's settings as the document stores them (text as typed); the document schema is the one definition. */
export type { StudyCase as StudyCaseSetting, StudyParameter as StudyParameterSetting, StudySettings } from "@/lib/notebook/document";
